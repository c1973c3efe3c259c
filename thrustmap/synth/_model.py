"""The forward model of the invented belt: fixed design, map frame, folds, wedge surface, noise.

The design (thrust positions, fold geometry, slopes) is fixed; the seed only
draws stations, measurement noise, surface roughness and field-sheet errors,
so every seed shares one truth.

Map frame: ``u`` runs along strike (grid azimuth ``TRANSPORT_GRID + 90``) and
``s`` along transport toward the foreland, both in metres from ``CENTRE``. All
in-sequence thrust traces share one bent shape, ``s = position + bend(u)``, so
the distance between two of them measured parallel to transport is the
difference of their positions everywhere along strike. ``sp = s - bend(u)`` is
that trace-parallel coordinate.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely
from numpy.typing import NDArray
from pyproj import Transformer

from thrustmap.north import convergence, true_to_grid
from thrustmap.orientation import (
    dip_direction_to_strike,
    line_to_vector,
    plane_to_normal,
    rake_to_line,
)

Float = NDArray[np.float64]

CRS_EPSG = 32633
STUDY_AREA = (700000.0, 5080000.0, 730000.0, 5110000.0)
CENTRE = (715000.0, 5095000.0)
TRANSPORT_GRID = 20.0

BEND = {
    "amplitude": 900.0,
    "length": 18000.0,
    "wiggle": 200.0,
    "wiggle_length": 11000.0,
    "phase": 0.7,
}
TRACE_STEP = 100.0
TRACE_U = (-26000.0, 26000.0)


@dataclass(frozen=True)
class ThrustDesign:
    """One thrust: id, position along transport (sp, metres), dip, digitising and hanging-wall attributes."""

    id: str
    position: float
    dip: float
    reverse_digitised: bool
    hw_given: str  # "side", "azimuth" or "none": which hanging-wall attribute the layer carries


IN_SEQUENCE = (
    ThrustDesign("T1", -11000.0, 35.0, False, "side"),
    ThrustDesign("T2", -5800.0, 32.0, True, "side"),
    ThrustDesign("T3", -1200.0, 30.0, False, "azimuth"),
    ThrustDesign("T4", 4600.0, 28.0, False, "none"),
    ThrustDesign("T5", 8900.0, 25.0, False, "side"),
)
# The out-of-sequence thrust: oblique, enters from the western edge inside the T3 sheet,
# truncates T3 at u = OOS_CROSSING_U and dies out at a free tip inside the T4 sheet.
OOS = ThrustDesign("T6", -1200.0, 40.0, True, "azimuth")
OOS_CROSSING_U = -7000.0
OOS_SLOPE = 0.36  # about 20 degrees oblique to the in-sequence traces
OOS_TIP_U = 2500.0
THRUSTS = (*IN_SEQUENCE, OOS)


@dataclass(frozen=True)
class FoldDesign:
    """Cylindrical hanging-wall fold train of one domain; angles in degrees, true north."""

    domain: str
    sheet: str
    interlimb: float
    ap_dip_direction: float
    ap_dip: float
    axis_plunge: float
    plunge_to_strike_end: bool  # plunge toward the axial plane's RHR strike end, else the other
    wavelength: float
    phase: float  # fraction of a wavelength


FOLDS = (
    FoldDesign("D1", "T1", 24.0, 200.0, 62.0, 8.0, True, 2400.0, 0.15),
    FoldDesign("D2", "T2", 48.0, 205.0, 70.0, 5.0, False, 2600.0, 0.40),
    FoldDesign("D3", "T3", 88.0, 196.0, 74.0, 10.0, True, 3200.0, 0.05),
    FoldDesign("D4", "T4", 62.0, 207.0, 68.0, 4.0, False, 2800.0, 0.30),
    FoldDesign("D5", "T5", 104.0, 203.0, 78.0, 7.0, True, 3400.0, 0.60),
    FoldDesign("D6", "foreland", 142.0, 199.0, 86.0, 3.0, False, 4800.0, 0.20),
)
DOMAINS = tuple(f.domain for f in FOLDS)
# Limb dip rises as clip(SHARPNESS * sin(phase)): chevron-like folds with narrow hinge zones.
SHARPNESS = 6.0

KAPPA = {"bedding": 50.0, "cleavage": 40.0, "thrust": 100.0, "hinge_line": 200.0}
SLICKENLINE_RAKE_SPREAD = 6.0

WEDGE = {
    "frontal_slope": 2.0,
    "rear_slope": 5.0,
    "foreland_slope": 0.3,
    "basal_dip": 3.0,
    "toe_elevation": 180.0,
    "decollement_elevation_at_front": -2500.0,
    "corner_width": 300.0,
    "roughness_amplitude": 6.0,
}
ROUGHNESS_WAVES = ((1700.0, 15.0), (2900.0, 75.0), (4300.0, 140.0))


def transformer_to_lonlat() -> Transformer:
    """Working CRS -> EPSG:4326 (lon, lat)."""
    return Transformer.from_crs(CRS_EPSG, 4326, always_xy=True)


def centre_convergence() -> float:
    """Meridian convergence at the centre of the study area, degrees (pyproj sign)."""
    return float(convergence(np.array([CENTRE[0]]), np.array([CENTRE[1]]), CRS_EPSG)[0])


def _unit(azimuth: float) -> tuple[float, float]:
    a = np.radians(azimuth)
    return float(np.sin(a)), float(np.cos(a))


def bend(u: Float) -> Float:
    """Shared shape of the thrust traces: offset along transport (metres) at strike position ``u``."""
    b = BEND
    return b["amplitude"] * (1.0 - (u / b["length"]) ** 2) + b["wiggle"] * np.sin(
        2.0 * np.pi * u / b["wiggle_length"] + b["phase"]
    )


def to_frame(x: Float, y: Float) -> tuple[Float, Float]:
    """Map coordinates -> (u along strike, sp trace-parallel distance along transport), metres."""
    te, tn = _unit(TRANSPORT_GRID)
    dx, dy = np.asarray(x, float) - CENTRE[0], np.asarray(y, float) - CENTRE[1]
    u = dx * tn - dy * te
    s = dx * te + dy * tn
    return u, s - bend(u)


def to_map(u: Float, sp: Float) -> tuple[Float, Float]:
    """Inverse of :func:`to_frame`."""
    te, tn = _unit(TRANSPORT_GRID)
    s = np.asarray(sp, float) + bend(np.asarray(u, float))
    return CENTRE[0] + s * te + u * tn, CENTRE[1] + s * tn - u * te


def oos_position(u: Float) -> Float:
    """Trace-parallel position (sp) of the out-of-sequence thrust at strike position ``u``."""
    return OOS.position + OOS_SLOPE * (np.asarray(u, float) - OOS_CROSSING_U)


def domain_index(x: Float, y: Float) -> NDArray[np.intp]:
    """Index into ``DOMAINS`` of the thrust sheet holding each point (analytic, vectorised)."""
    u, sp = to_frame(x, y)
    p = [t.position for t in IN_SEQUENCE]
    behind_t3 = np.where(u < OOS_CROSSING_U, oos_position(u), p[2])
    return (sp > p[0]).astype(np.intp) + (sp > p[1]) + (sp > behind_t3) + (sp > p[3]) + (sp > p[4])


def study_area_polygon() -> shapely.Polygon:
    """The study area rectangle."""
    return shapely.box(*STUDY_AREA)


def _polyline(u: Float, sp: Float) -> shapely.LineString:
    x, y = to_map(u, sp)
    return shapely.linestrings(np.column_stack([x, y]))


def thrust_lines() -> dict[str, shapely.LineString]:
    """Unclipped thrust traces in map coordinates, digitised toward +u."""
    u = np.arange(TRACE_U[0], TRACE_U[1] + TRACE_STEP / 2, TRACE_STEP)
    lines = {}
    for t in IN_SEQUENCE:
        if t.id == "T3":
            # T3 starts exactly on T6 where T6 truncates it.
            uu = np.concatenate([[OOS_CROSSING_U], u[u > OOS_CROSSING_U]])
        else:
            uu = u
        lines[t.id] = _polyline(uu, np.full(uu.shape, t.position))
    uu = np.unique(np.concatenate([u[u <= OOS_TIP_U], [OOS_CROSSING_U, OOS_TIP_U]]))
    lines[OOS.id] = _polyline(uu, oos_position(uu))
    return lines


@dataclass(frozen=True)
class FoldFrame:
    """Per-domain fold vectors (true-north east, north, up), stacked in ``DOMAINS`` order."""

    axis: Float  # (6, 3) downward axis
    up: Float  # (6, 3) b: in the axial plane, normal to the axis, upward
    forward: Float  # (6, 3) c: normal to the axial plane, toward the foreland
    axial_normal: Float  # (6, 3) downward pole of the axial plane
    theta_max: Float  # (6,) limb rotation from the hinge, radians
    profile_azimuth_grid: Float  # (6,) grid azimuth of the horizontal across-axial-trace direction
    wavelength: Float
    phase: Float


def fold_frame(transport_true: float, gamma: float) -> FoldFrame:
    """Build the fold vectors of every domain from the design."""
    dd = np.array([f.ap_dip_direction for f in FOLDS])
    dip = np.array([f.ap_dip for f in FOLDS])
    plunge = np.array([f.axis_plunge for f in FOLDS])
    strike = dip_direction_to_strike(dd)
    end = np.where([f.plunge_to_strike_end for f in FOLDS], strike, strike + 180.0)
    rake = np.degrees(np.arcsin(np.sin(np.radians(plunge)) / np.sin(np.radians(dip))))
    a = line_to_vector(*rake_to_line(dd, dip, rake, from_azimuth=end))
    n_ap = plane_to_normal(dd, dip)
    b = np.cross(n_ap, a)
    b /= np.linalg.norm(b, axis=1)[:, None]
    b *= np.sign(b[:, 2])[:, None]
    c = np.cross(a, b)
    c /= np.linalg.norm(c, axis=1)[:, None]
    te, tn = _unit(transport_true)
    c *= np.sign(c[:, 0] * te + c[:, 1] * tn)[:, None]
    theta_max = np.radians(90.0 - np.array([f.interlimb for f in FOLDS]) / 2.0)
    return FoldFrame(
        axis=a,
        up=b,
        forward=c,
        axial_normal=n_ap,
        theta_max=theta_max,
        profile_azimuth_grid=true_to_grid(dd + 180.0, gamma),
        wavelength=np.array([f.wavelength for f in FOLDS]),
        phase=np.array([f.phase for f in FOLDS]),
    )


def fold_phase(frame: FoldFrame, dom: NDArray[np.intp], x: Float, y: Float) -> Float:
    """Fold phase (radians): antiformal hinges at 0, synformal at pi, moving toward the foreland."""
    az = np.radians(frame.profile_azimuth_grid[dom])
    d = (x - CENTRE[0]) * np.sin(az) + (y - CENTRE[1]) * np.cos(az)
    return 2.0 * np.pi * (d / frame.wavelength[dom] - frame.phase[dom])


def younging(frame: FoldFrame, dom: NDArray[np.intp], phase: Float) -> Float:
    """Noise-free bedding normals (n, 3) pointing stratigraphically up (the younging direction)."""
    theta = frame.theta_max[dom] * np.clip(SHARPNESS * np.sin(phase), -1.0, 1.0)
    return np.cos(theta)[:, None] * frame.up[dom] + np.sin(theta)[:, None] * frame.forward[dom]


def in_hinge_zone(phase: Float) -> NDArray[np.bool_]:
    """Points where the limb rotation has not yet reached its limb value."""
    return np.abs(SHARPNESS * np.sin(phase)) < 1.0


def fisher(mean: Float, kappa: Float | float, rng: np.random.Generator) -> Float:
    """Draw one unit vector per row of ``mean`` from a Fisher (1953) distribution about it.

    The cosine of the angle to the mean is drawn by inverting its distribution,
    ``w = 1 + log(u + (1 - u) exp(-2 kappa)) / kappa``; the azimuth about the
    mean is uniform.
    """
    mean = np.asarray(mean, float)
    n = mean.shape[0]
    k = np.broadcast_to(np.asarray(kappa, float), (n,))
    u = 1.0 - rng.random(n)
    w = 1.0 + np.log(u + (1.0 - u) * np.exp(-2.0 * k)) / k
    phi = rng.uniform(0.0, 2.0 * np.pi, n)
    helper = np.where((np.abs(mean[:, 2]) > 0.9)[:, None], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0])
    e1 = np.cross(mean, helper)
    e1 /= np.linalg.norm(e1, axis=1)[:, None]
    e2 = np.cross(mean, e1)
    r = np.sqrt(np.clip(1.0 - w * w, 0.0, None))
    return w[:, None] * mean + (r * np.cos(phi))[:, None] * e1 + (r * np.sin(phi))[:, None] * e2


def _softplus(v: Float, width: float) -> Float:
    return width * np.logaddexp(0.0, v / width)


def elevation(x: Float, y: Float, roughness_phase: Float) -> Float:
    """Surface elevation (metres): a wedge along transport plus small deterministic roughness.

    Elevation falls toward the foreland at ``rear_slope`` behind T3, ``frontal_slope``
    between T3 and the frontal thrust T5 and ``foreland_slope`` beyond it, the
    slopes measured parallel to transport; the corners are rounded over about
    ``corner_width`` metres.
    """
    w = WEDGE
    front, brk = IN_SEQUENCE[4].position, IN_SEQUENCE[2].position
    tf, tr, tl = (
        np.tan(np.radians(w[k])) for k in ("frontal_slope", "rear_slope", "foreland_slope")
    )
    _, sp = to_frame(x, y)
    z = (
        w["toe_elevation"]
        + tl * (front - sp)
        + (tf - tl) * _softplus(front - sp, w["corner_width"])
        + (tr - tf) * _softplus(brk - sp, w["corner_width"])
    )
    for (length, azimuth), ph in zip(ROUGHNESS_WAVES, roughness_phase, strict=True):
        ae, an = _unit(azimuth)
        z = z + w["roughness_amplitude"] * np.sin(2.0 * np.pi * (x * ae + y * an) / length + ph)
    return z
