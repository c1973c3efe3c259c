"""Orientation statistics: Fisher means, the orientation tensor, fabric shape and density.

Lines are given as trend/plunge in degrees (poles to planes as the trend/plunge
of the pole, see :func:`thrustmap.orientation.plane_to_pole`). Field lines and
poles are axes: a line and its reverse are the same measurement. By default the
statistics treat them so (the eigen approach): before a Fisher mean is taken,
every axis is turned into the hemisphere of the principal eigenvector of the
orientation tensor.

References
----------
Fisher, R. A. (1953). Dispersion on a sphere. Proc. R. Soc. London A 217, 295-305.
Woodcock, N. H. (1977). Specification of fabric shapes using an eigenvalue method.
GSA Bulletin 88, 1231-1236.
Vollmer, F. W. (1990). An application of eigenvalue methods to structural domain
analysis. GSA Bulletin 102, 786-791.
Kamb, W. B. (1959). Ice petrofabric observations from Blue Glacier, Washington.
J. Geophys. Res. 64, 1891-1909.
Vollmer, F. W. (1995). C program for automatic contouring of spherical orientation
data using a modified Kamb method. Computers & Geosciences 21, 31-49.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike, NDArray

from thrustmap.errors import DegenerateDataError, InputError, ParameterError, ThrustmapWarning
from thrustmap.orientation import vector_to_line

__all__ = [
    "FisherStats",
    "OrientationTensor",
    "FabricShape",
    "DensityGrid",
    "DENSITY_METHODS",
    "fisher_stats",
    "fisher_k_alpha",
    "orientation_tensor",
    "fabric_shape",
    "density",
]

if TYPE_CHECKING:
    import geopandas as gpd

Float = NDArray[np.float64]

DENSITY_METHODS = ("exponential_kamb", "kamb", "linear_kamb")
FEW = 5
# Chi-square(5) 95 % quantile, the critical value of Bingham's uniformity test.
_CHI2_5_95 = 11.070497693516351
# Absolute bound on the kernel mass dropped by the exponential-kernel cut-off.
_EXP_TRUNCATION = 1e-13
# Pairs of data x counting nodes evaluated at once by the dense product.
_DENSE_PAIRS = 2_000_000
# Kernels reaching further than this (cosine of the support cap) go dense: a tree
# visits most pairs anyway, at a higher cost per pair.
_TREE_SUPPORT = 0.85
_ZERO = 1e-12


def _checked(
    trend: ArrayLike, plunge: ArrayLike, what: str, *, angle: str = "plunge", low: float = -90.0
) -> tuple[Float, Float]:
    """Flat float arrays of paired angles; NaN, mismatched shapes, empty input and
    ``angle`` (the second array) outside [low, 90] degrees are errors."""
    t = np.atleast_1d(np.asarray(trend, dtype=float)).ravel()
    p = np.atleast_1d(np.asarray(plunge, dtype=float)).ravel()
    if t.shape != p.shape:
        raise InputError(
            f"{what}: got {t.size} azimuths and {p.size} dips/plunges; they must pair up"
        )
    finite = np.isfinite(t) & np.isfinite(p)
    if not finite.all():
        bad = np.flatnonzero(~finite)
        raise InputError(
            f"{what}: missing or non-finite value at position(s) {bad[:10].tolist()}; "
            "select complete measurements first",
            value=float(t[bad[0]]) if not np.isfinite(t[bad[0]]) else float(p[bad[0]]),
        )
    if t.size == 0:
        raise DegenerateDataError(f"{what}: no measurements")
    bad = np.flatnonzero((p < low) | (p > 90.0))
    if bad.size:
        raise InputError(
            f"{what}: {angle} at position {int(bad[0])} is {float(p[bad[0]])}; {angle}s lie "
            f"within {low:g} to 90 degrees",
            field=angle,
            value=float(p[bad[0]]),
        )
    return t, p


def _components(trend: Float, plunge: Float) -> Float:
    """Unit vectors as rows (3, N): east, north, up components of lines (degrees).

    Plunges must lie within [-90, 90]. Each cosine comes from its sine as
    sqrt((1 - s)(1 + s)), with the sign of the quadrant for the trend: half the
    calls to the trigonometric functions that dominate the cost on large data,
    in preallocated rows. Within 1e-13 of ``line_to_vector`` (at worst 1e-8
    within 1e-6 degrees of a quarter turn).
    """
    n = trend.size
    out = np.empty((3, n))
    cos_p = np.empty(n)
    aux = np.empty(n)
    east, north, up = out

    def cosine(sine: Float, result: Float) -> None:
        np.subtract(1.0, sine, out=result)
        np.add(1.0, sine, out=aux)
        result *= aux
        np.sqrt(result, out=result)

    np.radians(plunge, out=up)
    np.sin(up, out=up)
    cosine(up, cos_p)
    np.negative(up, out=up)
    np.radians(trend, out=east)
    np.sin(east, out=east)
    cosine(east, north)
    # The cosine is negative where the trend lies in the half turn (90, 270) mod 360.
    np.multiply(trend, 1.0 / 360.0, out=aux)
    aux += 0.25
    aux -= np.floor(aux)
    np.subtract(0.5, aux, out=aux)
    np.copysign(north, aux, out=north)
    east *= cos_p
    north *= cos_p
    return out


def _lines(trend: ArrayLike, plunge: ArrayLike, *, what: str = "trend/plunge") -> Float:
    """Unit vectors (3, N) of lines given in degrees, checked by :func:`_checked`."""
    return _components(*_checked(trend, plunge, what))


def _dot(a: Float, b: Float) -> float:
    # einsum's own loop: single-threaded and faster than BLAS for long 1-D products.
    return float(np.einsum("i,i->", a, b))


def _tensor(x: Float) -> Float:
    """Normalised orientation tensor (1/N) sum x x^T of unit vectors given as rows (3, N)."""
    t = np.empty((3, 3))
    for i in range(3):
        for j in range(i, 3):
            t[i, j] = t[j, i] = _dot(x[i], x[j])
    return t / x.shape[1]


def _eigen(tensor: Float) -> tuple[Float, Float]:
    """Eigenvalues (descending, clipped at 0) and eigenvectors (columns) of a symmetric tensor."""
    vals, vecs = np.linalg.eigh(tensor)
    order = np.argsort(vals)[::-1]
    return np.clip(vals[order], 0.0, None), vecs[:, order]


def _warn_few(n: int, what: str) -> None:
    if n < FEW:
        warnings.warn(
            f"{what}: only {n} measurement(s); statistics from fewer than {FEW} are unreliable",
            ThrustmapWarning,
            stacklevel=3,
        )


def _is_uniform(eigenvalues: Float, n: int) -> bool:
    """Bingham's test: True when uniformity of the axes is not rejected at 5 %."""
    statistic = 7.5 * n * float(np.sum((eigenvalues - 1.0 / 3.0) ** 2))
    return statistic < _CHI2_5_95


@dataclass(frozen=True)
class FisherStats:
    """Fisher (1953) statistics of a set of directions or axes.

    Attributes
    ----------
    mean_trend, mean_plunge : float
        Mean direction, degrees (lower hemisphere for axes).
    n : int
        Number of measurements N.
    r : float
        Length of the resultant R of the N unit vectors (0 <= R <= N).
    k : float
        Precision parameter estimate k = (N - 1) / (N - R); ``inf`` when R = N.
    alpha : float
        Half-angle of the confidence cone about the mean at level ``conf``,
        degrees (alpha95 for the default 0.95); 180 when the data are too
        dispersed for the exact formula to give a cone.
    conf : float
        Confidence level of ``alpha``.
    axial : bool
        Whether the data were treated as axes.
    """

    mean_trend: float
    mean_plunge: float
    n: int
    r: float
    k: float
    alpha: float
    conf: float
    axial: bool


def _check_conf(conf: float) -> None:
    if not 0.0 < conf < 1.0:
        raise ParameterError(f"conf = {conf!r} must lie strictly between 0 and 1 (e.g. 0.95)")


def fisher_k_alpha(n: int, r: float, *, conf: float = 0.95) -> tuple[float, float]:
    """Fisher (1953) precision k and confidence-cone half-angle alpha from N and R.

    k = (N - 1) / (N - R), infinite when N - R vanishes;
    cos(alpha) = 1 - (N - R) / R * ((1 / p)^(1 / (N - 1)) - 1), p = 1 - conf.

    Parameters
    ----------
    n : int
        Number of unit vectors, at least 2.
    r : float
        Length of their resultant (vector sum).
    conf : float
        Confidence level of the cone, 0 < conf < 1. Keyword only.

    Returns
    -------
    k : float
        Precision.
    alpha : float
        Cone half-angle, degrees; 180 where the data are too dispersed for a
        cone (cos(alpha) below -1, or R = 0).

    Raises
    ------
    DegenerateDataError
        When ``n`` is below 2.
    ParameterError
        ``conf`` outside (0, 1).

    Examples
    --------
    >>> k, alpha = fisher_k_alpha(10, 9.1220)
    >>> round(k, 2), round(alpha, 1)
    (10.25, 15.8)
    """
    _check_conf(conf)
    if n < 2:
        raise DegenerateDataError(f"Fisher statistics need at least 2 measurements; got {n}")
    k = float("inf") if n - r <= _ZERO * n else (n - 1.0) / (n - r)
    p = 1.0 - conf
    cos_alpha = 1.0 - (n - r) / r * ((1.0 / p) ** (1.0 / (n - 1.0)) - 1.0) if r > 0 else -2.0
    return k, float(np.degrees(np.arccos(np.clip(cos_alpha, -1.0, 1.0))))


def fisher_stats(
    trend: ArrayLike, plunge: ArrayLike, *, conf: float = 0.95, axial: bool = True
) -> FisherStats:
    """Fisher (1953) mean direction, resultant length, precision and confidence cone.

    With ``axial=True`` (lines and poles measured in the field) every axis is
    first turned into the hemisphere of the principal eigenvector of the
    orientation tensor, so that a cluster across the horizon is not split.

    Parameters
    ----------
    trend, plunge : array_like
        Lines, degrees. With ``axial=False`` a negative plunge means an upward
        direction.
    conf : float
        Confidence level of the cone, 0 < conf < 1. Keyword only.
    axial : bool
        Treat the data as axes (default) or as directions. Keyword only.

    Returns
    -------
    FisherStats
        k = (N - 1) / (N - R) and the exact cone
        cos(alpha) = 1 - (N - R) / R * ((1 / p)^(1 / (N - 1)) - 1), p = 1 - conf.

    Raises
    ------
    DegenerateDataError
        Fewer than 2 measurements.
    InputError
        Missing values, plunges outside -90 to 90 or arrays of different lengths.
    ParameterError
        ``conf`` outside (0, 1).

    Warns
    -----
    ThrustmapWarning
        Fewer than 5 measurements; data not unimodal (a girdle, Woodcock K < 1,
        or not distinguishable from uniform by Bingham's test), where a mean
        direction is not meaningful; data too dispersed for a confidence cone.

    Examples
    --------
    >>> s = fisher_stats([10, 20, 15, 12, 18], [40, 45, 50, 42, 47])
    >>> round(s.mean_trend, 1), round(s.mean_plunge, 1), s.n
    (14.9, 44.9, 5)
    """
    _check_conf(conf)
    x = _lines(trend, plunge)
    n = x.shape[1]
    if n < 2:
        raise DegenerateDataError(f"Fisher statistics need at least 2 measurements; got {n}")
    _warn_few(n, "fisher_stats")
    vals, vecs = _eigen(_tensor(x))
    if axial:
        sign = np.where(vecs[:, 0] @ x < 0.0, -1.0, 1.0)
        resultant = np.array([_dot(sign, x[0]), _dot(sign, x[1]), _dot(sign, x[2])])
    else:
        resultant = x.sum(axis=1)
    _warn_not_unimodal(vals, n)
    r = min(float(np.linalg.norm(resultant)), float(n))
    k, alpha = fisher_k_alpha(n, r, conf=conf)
    if alpha == 180.0:
        warnings.warn(
            f"fisher_stats: N = {n}, R = {r:.4g}: the data are too dispersed for a "
            f"{conf:.0%} confidence cone; alpha set to 180 degrees",
            ThrustmapWarning,
            stacklevel=2,
        )
    mean = resultant / r if r > 0 else vecs[:, 0]
    if axial:
        t, pl = vector_to_line(mean)
        mean_trend, mean_plunge = float(t), float(pl)
    else:
        mean_plunge = float(np.degrees(np.arcsin(np.clip(-mean[2], -1.0, 1.0))))
        mean_trend = float(np.degrees(np.arctan2(mean[0], mean[1])) % 360.0)
    return FisherStats(mean_trend, mean_plunge + 0.0, n, r, k, alpha, conf, axial)


def _warn_not_unimodal(eigenvalues: Float, n: int) -> None:
    shape = _shape_values(eigenvalues)
    if _is_uniform(eigenvalues, n):
        reason = "they cannot be told from a uniform distribution (Bingham test, 5 %)"
    elif shape[0] < 1.0:
        reason = f"they form a girdle (Woodcock K = {shape[0]:.2f} < 1)"
    else:
        return
    warnings.warn(
        f"fisher_stats: the {n} measurements are not unimodal: {reason}; a Fisher mean "
        "is not meaningful, use the orientation tensor's eigenvectors instead",
        ThrustmapWarning,
        stacklevel=3,
    )


@dataclass(frozen=True)
class FabricShape:
    """Fabric shape from the normalised eigenvalues S1 >= S2 >= S3.

    Attributes
    ----------
    K : float or ndarray
        Woodcock (1977) shape, ln(S1/S2) / ln(S2/S3): K > 1 clusters, K < 1
        girdles; ``inf`` when S2 = S3 (a perfect cluster), 0 when S1 = S2 > S3.
    C : float or ndarray
        Woodcock (1977) strength, ln(S1/S3); ``inf`` when S3 = 0.
    P, G, R : float or ndarray
        Vollmer (1990) point, girdle and random components: S1 - S2,
        2 (S2 - S3) and 3 S3; P + G + R = 1.
    """

    K: float | Float
    C: float | Float
    P: float | Float
    G: float | Float
    R: float | Float


def _shape_values(eigenvalues: Float) -> tuple[Float, Float, Float, Float, Float]:
    s = np.sort(np.clip(np.asarray(eigenvalues, dtype=float), 0.0, None), axis=-1)[..., ::-1]
    s = s / np.sum(s, axis=-1, keepdims=True)
    s = np.where(s < _ZERO, 0.0, s)
    s1, s2, s3 = s[..., 0], s[..., 1], s[..., 2]
    with np.errstate(divide="ignore", invalid="ignore"):
        top = np.log(s1 / s2)
        bottom = np.log(s2 / s3)
        k = top / bottom
        c = np.log(s1 / s3)
    same23 = np.abs(s2 - s3) <= _ZERO
    same12 = np.abs(s1 - s2) <= _ZERO
    k = np.where(same23 & ~same12, np.inf, np.where(same12 & ~same23, 0.0, k))
    k = np.where(same12 & same23, np.nan, k)
    return k, c, s1 - s2, 2.0 * (s2 - s3), 3.0 * s3


def fabric_shape(eigenvalues: ArrayLike) -> FabricShape:
    """Woodcock (1977) K and C and Vollmer (1990) P, G, R from tensor eigenvalues.

    Parameters
    ----------
    eigenvalues : array_like, shape (..., 3)
        Eigenvalues of orientation tensors in any order and scale; they are
        sorted and normalised to sum 1.

    Returns
    -------
    FabricShape
        Floats for one tensor, arrays for a stack.

    Raises
    ------
    InputError
        When the last axis does not hold 3 values or the values are not finite
        and non-negative with a positive sum.

    Warns
    -----
    ThrustmapWarning
        When S1 = S2 = S3, where Woodcock's K is undefined (NaN).

    Examples
    --------
    >>> f = fabric_shape([0.6, 0.3, 0.1])
    >>> round(float(f.K), 6), round(float(f.C), 6), round(float(f.G), 6)
    (0.63093, 1.791759, 0.4)
    """
    s = np.asarray(eigenvalues, dtype=float)
    if s.shape[-1:] != (3,):
        raise InputError(f"fabric_shape: expected 3 eigenvalues per tensor, got shape {s.shape}")
    if not np.all(np.isfinite(s)) or np.any(s < -_ZERO) or np.any(np.sum(s, axis=-1) <= 0):
        raise InputError(
            "fabric_shape: eigenvalues must be finite and non-negative with a positive sum",
            value=s.tolist(),
        )
    k, c, p, g, r = _shape_values(s)
    if np.any(np.isnan(k)):
        warnings.warn(
            "fabric_shape: S1 = S2 = S3 (an isotropic tensor): Woodcock K is undefined (NaN)",
            ThrustmapWarning,
            stacklevel=2,
        )
    if s.ndim == 1:
        return FabricShape(float(k), float(c), float(p), float(g), float(r))
    return FabricShape(k, c, p, g, r)


@dataclass(frozen=True)
class OrientationTensor:
    """The orientation tensor T = (1/N) sum x x^T of N unit axes and its eigen-decomposition.

    Attributes
    ----------
    tensor : ndarray, shape (3, 3)
        T in (east, north, up) coordinates; its trace is 1.
    eigenvalues : ndarray, shape (3,)
        S1 >= S2 >= S3, summing to 1.
    eigenvectors : ndarray, shape (3, 3)
        Unit eigenvectors as columns, in the order of the eigenvalues, each
        pointing down (lower hemisphere).
    trend, plunge : ndarray, shape (3,)
        The eigenvectors as lines, degrees.
    n : int
        Number of axes.
    """

    tensor: Float
    eigenvalues: Float
    eigenvectors: Float
    trend: Float
    plunge: Float
    n: int

    @property
    def shape(self) -> FabricShape:
        """Woodcock and Vollmer shape parameters of the eigenvalues."""
        return fabric_shape(self.eigenvalues)


def _tensor_from_vectors(x: Float) -> OrientationTensor:
    t = _tensor(x)
    vals, vecs = _eigen(t)
    vecs = np.where(vecs[2] > 0, -vecs, vecs)
    trend, plunge = vector_to_line(vecs.T)
    return OrientationTensor(t, vals / vals.sum(), vecs, trend, plunge, x.shape[1])


def orientation_tensor(trend: ArrayLike, plunge: ArrayLike) -> OrientationTensor:
    """Orientation tensor of axes with its eigenvalues and eigenvectors.

    The eigenvector of S1 is the best-fit axis of a cluster; that of S3 is the
    pole of the best-fit great circle of a girdle (Woodcock 1977).

    Parameters
    ----------
    trend, plunge : array_like
        Lines or poles, degrees.

    Returns
    -------
    OrientationTensor

    Raises
    ------
    DegenerateDataError
        No measurements.
    InputError
        Missing values, plunges outside -90 to 90 or arrays of different lengths.

    Warns
    -----
    ThrustmapWarning
        Fewer than 5 measurements.

    Examples
    --------
    >>> t = orientation_tensor([0, 90, 180, 270, 45], [0, 0, 0, 0, 0])
    >>> round(float(t.plunge[2]), 6)
    90.0
    """
    x = _lines(trend, plunge)
    _warn_few(x.shape[1], "orientation_tensor")
    return _tensor_from_vectors(x)


# --------------------------------------------------------------------------- density


@dataclass(frozen=True)
class DensityGrid:
    """Point density on the lower hemisphere at a grid of counting nodes.

    Attributes
    ----------
    lon, lat : ndarray (gridsize, gridsize)
        Stereonet longitude and latitude of the nodes, radians, laid out as
        mplstereonet's ``density_grid`` does (``np.mgrid`` over [-pi/2, pi/2],
        longitude along the first axis).
    x, y : ndarray (gridsize, gridsize)
        The nodes on a lower-hemisphere equal-area (Lambert) net of radius 1,
        x east, y north (mplstereonet's axes coordinates divided by sqrt 2).
    trend, plunge : ndarray (gridsize, gridsize)
        The nodes as lines, degrees.
    values : ndarray (gridsize, gridsize)
        Density in multiples of sigma above the uniform expectation; negative
        values are set to 0.
    method : str
    sigma : float
    n : int
        Number of data.
    """

    lon: Float
    lat: Float
    x: Float
    y: Float
    trend: Float
    plunge: Float
    values: Float
    method: str
    sigma: float
    n: int

    def contour_polygons(self, levels: ArrayLike) -> gpd.GeoDataFrame:
        """Filled contour bands as polygons on the unit equal-area net.

        Parameters
        ----------
        levels : array_like
            Increasing contour levels in multiples of sigma; a band is made
            between each pair of successive levels.

        Returns
        -------
        geopandas.GeoDataFrame
            Columns ``lower``, ``upper`` and a (Multi)Polygon ``geometry`` in
            net coordinates (no CRS); empty bands are left out.

        Raises
        ------
        ParameterError
            Fewer than 2 levels or levels not increasing.

        Examples
        --------
        >>> g = density([0, 10, 5, 350, 3], [80, 85, 75, 82, 88], method="kamb", gridsize=40)
        >>> bands = g.contour_polygons([2, 4, 100])
        >>> list(bands.columns)
        ['lower', 'upper', 'geometry']
        """
        return _contour_polygons(self, levels)


def _counters(gridsize: int) -> tuple[Float, Float, Float]:
    bound = np.pi / 2.0
    lon, lat = np.mgrid[-bound : bound : gridsize * 1j, -bound : bound : gridsize * 1j]
    cl = np.cos(lat)
    xyz = np.column_stack(
        [(cl * np.cos(lon)).ravel(), (cl * np.sin(lon)).ravel(), np.sin(lat).ravel()]
    )
    return lon, lat, xyz


def _to_stereonet(vectors: Float) -> Float:
    """(east, north, up) unit vectors as rows (3, N) to mplstereonet's frame (-up, east, north), (N, 3)."""
    return np.column_stack([-vectors[2], vectors[0], vectors[1]])


def _kernel(method: str, n: int, sigma: float, w_max: float):
    """Kernel of ``method``: (function of cos distance, normalising units, support cosine)."""
    if method == "exponential_kamb":
        f = 2.0 * (1.0 + n / sigma**2)
        units = np.sqrt(n * (f / 2.0 - 1.0) / f**2)
        cutoff = np.log(max(n * w_max, 1.0) / _EXP_TRUNCATION)
        return (lambda c: np.exp(f * (c - 1.0))), units, 1.0 - cutoff / f
    radius = 1.0 - sigma**2 / (n + sigma**2)
    units = np.sqrt(n * radius * (1.0 - radius))
    if method == "kamb":
        return (lambda c: (c >= radius).astype(float)), units, radius
    slope = 2.0 / (1.0 - radius)
    return (lambda c: np.where(c >= radius, slope * (c - radius), 0.0)), units, radius


def _sums_dense(counters: Float, points: Float, weights: Float, kernel) -> Float:
    out = np.empty(counters.shape[0])
    step = max(1, _DENSE_PAIRS // max(points.shape[0], 1))
    for start in range(0, counters.shape[0], step):
        cos = np.abs(counters[start : start + step] @ points.T)
        out[start : start + step] = kernel(cos) @ weights
    return out


def _sums_tree(counters: Float, points: Float, weights: Float, kernel, support: float) -> Float:
    from scipy.spatial import cKDTree

    n = points.shape[0]
    # Axes: a datum and its antipode are the same; with a support cap under 90 degrees
    # at most one of the two lies within reach of a node.
    data_tree = cKDTree(np.vstack([points, -points]), balanced_tree=False)
    node_tree = cKDTree(counters, balanced_tree=False)
    reach = np.sqrt(2.0 - 2.0 * support) * (1.0 + 1e-9)
    pairs = node_tree.sparse_distance_matrix(data_tree, reach, output_type="ndarray")
    cos = 1.0 - 0.5 * np.square(pairs["v"])
    mass = kernel(cos)
    if weights is not None:
        mass = mass * weights[pairs["j"] % n]
    return np.bincount(pairs["i"], weights=mass, minlength=counters.shape[0])


def density(
    trend: ArrayLike,
    plunge: ArrayLike,
    *,
    method: str = "exponential_kamb",
    sigma: float = 3.0,
    gridsize: int = 100,
    weights: ArrayLike | None = None,
) -> DensityGrid:
    """Kamb (1959) or exponential Kamb (Vollmer 1995) density of axes, in multiples of sigma.

    The data are axes (the absolute cosine between datum and node is used).
    Each node's value is (sum of the weighted kernel - 0.5) / s, with s the
    standard deviation of the count expected from a uniform sample, as in
    mplstereonet's ``density_grid`` (same nodes, same kernels): for ``kamb``
    the count within the cone whose expected uniform count is sigma standard
    deviations (cos theta >= 1 - sigma^2 / (N + sigma^2)); ``linear_kamb`` the
    same cone with a linearly tapered weight; ``exponential_kamb`` the weight
    exp(f (|cos theta| - 1)), f = 2 (1 + N / sigma^2).

    The kernels have compact support (Kamb cones) or are truncated where the
    exponential weight of every remaining datum together is below 1e-13, and
    only data within reach of a node are visited (a k-d tree on the unit
    vectors and their antipodes), so large data sets are fast.

    Parameters
    ----------
    trend, plunge : array_like
        Lines or poles, degrees.
    method : {"exponential_kamb", "kamb", "linear_kamb"}
        Keyword only.
    sigma : float
        Size of the counting area in standard deviations, > 0 (3 in Kamb's use).
    gridsize : int
        Nodes per side of the square grid, >= 2.
    weights : array_like, optional
        Non-negative weight per datum, normalised by their mean.

    Returns
    -------
    DensityGrid

    Raises
    ------
    ParameterError
        Unknown method, sigma <= 0, gridsize < 2 or bad weights.
    DegenerateDataError
        No data.
    InputError
        Missing values, plunges outside -90 to 90 or arrays of different lengths.

    Examples
    --------
    >>> g = density([0], [90], method="kamb", gridsize=10)
    >>> round(float(g.values.max()), 7)
    1.6666667
    """
    if method not in DENSITY_METHODS:
        raise ParameterError(
            f"density: method {method!r} is not one of: {', '.join(DENSITY_METHODS)}"
        )
    if not (np.isfinite(sigma) and sigma > 0):
        raise ParameterError(f"density: sigma = {sigma!r} must be a positive number (3 is usual)")
    if int(gridsize) != gridsize or gridsize < 2:
        raise ParameterError(f"density: gridsize = {gridsize!r} must be an integer >= 2")
    gridsize = int(gridsize)
    points = _to_stereonet(_lines(trend, plunge))
    n = points.shape[0]
    w = None
    w_max = 1.0
    if weights is not None:
        w = np.asarray(weights, dtype=float).ravel()
        if w.shape != (n,) or not np.all(np.isfinite(w)) or np.any(w < 0) or w.sum() <= 0:
            raise ParameterError(
                f"density: weights must be {n} finite non-negative numbers with a positive sum"
            )
        w = w / w.mean()
        w_max = float(w.max())
    lon, lat, counters = _counters(gridsize)
    kernel, units, support = _kernel(method, n, float(sigma), w_max)
    if support <= _TREE_SUPPORT or n * counters.shape[0] <= _DENSE_PAIRS // 10:
        sums = _sums_dense(counters, points, np.ones(n) if w is None else w, kernel)
    else:
        sums = _sums_tree(counters, points, w, kernel, support)
    values = ((sums - 0.5) / units).reshape(lon.shape)
    values[values < 0] = 0.0
    scale = 1.0 / np.sqrt(1.0 + counters[:, 0])
    net_x = (counters[:, 1] * scale).reshape(lon.shape)
    net_y = (counters[:, 2] * scale).reshape(lon.shape)
    world = np.column_stack([counters[:, 1], counters[:, 2], -counters[:, 0]])
    node_trend, node_plunge = vector_to_line(world)
    return DensityGrid(
        lon,
        lat,
        net_x,
        net_y,
        node_trend.reshape(lon.shape),
        node_plunge.reshape(lon.shape),
        values,
        method,
        float(sigma),
        n,
    )


def _contour_polygons(grid: DensityGrid, levels: ArrayLike) -> gpd.GeoDataFrame:
    # Imported here: the statistics themselves need only numpy.
    import contourpy
    import geopandas as gpd
    import shapely

    lv = np.asarray(levels, dtype=float).ravel()
    if lv.size < 2 or np.any(np.diff(lv) <= 0) or not np.all(np.isfinite(lv)):
        raise ParameterError(
            f"contour levels must be at least 2 finite increasing numbers; got {lv.tolist()}"
        )
    # Contour in the regular (lon, lat) grid, then map the vertices to the net.
    gen = contourpy.contour_generator(
        grid.lon, grid.lat, grid.values, fill_type=contourpy.FillType.OuterOffset
    )
    rows = []
    for lower, upper in zip(lv[:-1], lv[1:], strict=True):
        points, offsets = gen.filled(lower, upper)
        parts = []
        for pts, offs in zip(points, offsets, strict=True):
            xy = _lonlat_to_net(pts[:, 0], pts[:, 1])
            rings = [xy[a:b] for a, b in zip(offs[:-1], offs[1:], strict=True)]
            rings = [r for r in rings if len(r) >= 4]
            if rings:
                parts.append(shapely.Polygon(rings[0], rings[1:]))
        if parts:
            geom = shapely.make_valid(shapely.MultiPolygon(parts))
            rows.append((float(lower), float(upper), geom))
    return gpd.GeoDataFrame(
        {"lower": [r[0] for r in rows], "upper": [r[1] for r in rows]},
        geometry=[r[2] for r in rows],
    )


def _lonlat_to_net(lon: Float, lat: Float) -> Float:
    cl = np.cos(lat)
    x = cl * np.cos(lon)
    scale = 1.0 / np.sqrt(1.0 + np.clip(x, 0.0, None))
    return np.column_stack([cl * np.sin(lon) * scale, np.sin(lat) * scale])
