"""Lower-hemisphere equal-area stereonet figures of a domain (matplotlib + mplstereonet).

One figure per domain: poles to planes and lines by feature type over the
density of the folded surface's poles, the pi-girdle, the fold axis with its
95 % confidence cone, the axial plane, and a box with the fold's numbers.
Figures are written as PNG and SVG by :func:`thrustmap.figures.save_figure`.
"""

from __future__ import annotations

import logging
import os
import re
from pathlib import Path

import mplstereonet  # noqa: F401  (registers the stereonet projections)
import numpy as np
import pandas as pd
from matplotlib.colors import LinearSegmentedColormap
from matplotlib.figure import Figure
from matplotlib.lines import Line2D

from thrustmap.domains import DOMAIN_COLUMN, DomainStatistics
from thrustmap.figures import save_figure
from thrustmap.folds import FoldFit
from thrustmap.orientation import dip_direction_to_strike, plane_to_pole
from thrustmap.stats import density

__all__ = [
    "FEATURE_STYLES",
    "plot_stereonet",
    "write_stereonet",
    "write_domain_stereonets",
    "stereonet_filename",
]

log = logging.getLogger(__name__)

INK = "#23262b"
MUTED = "#8a8f98"
# Warm "survey ink on paper" density ramp, light enough for symbols to read on top.
DENSITY_CMAP = LinearSegmentedColormap.from_list(
    "thrustmap_density", ["#fbf6ec", "#f1dcb0", "#e4b46c", "#cf7f3e", "#a8502a"]
)
GIRDLE = {"color": "#2a6f77", "linewidth": 1.6, "linestyle": (0, (6, 3))}
AXIAL_PLANE = {"color": "#8e2c62", "linewidth": 2.2}
AXIS = {
    "marker": "*",
    "markersize": 17,
    "color": "#d1382c",
    "markeredgecolor": "white",
    "markeredgewidth": 1.0,
}
CONE = {"facecolor": "#d1382c", "edgecolor": "#d1382c", "alpha": 0.28, "linewidth": 1.0}
HINGE = {
    "marker": "D",
    "markersize": 9,
    "color": "white",
    "markeredgecolor": "#111111",
    "markeredgewidth": 1.6,
}

#: Marker style per feature type (poles for planes, points for lines).
FEATURE_STYLES: dict[str, dict[str, object]] = {
    "bedding": {"marker": "o", "color": "#1f4e5a", "markersize": 5.0},
    "cleavage": {"marker": "^", "color": "#6a4c93", "markersize": 6.0},
    "foliation": {"marker": "v", "color": "#4d7c3a", "markersize": 6.0},
    "axial_plane": {"marker": "p", "color": "#8e2c62", "markersize": 7.0},
    "fault": {"marker": "s", "color": "#b3261e", "markersize": 5.5},
    "thrust": {"marker": "s", "color": "#7a1712", "markersize": 5.5},
    "joint": {"marker": "o", "color": "#9aa0a6", "markersize": 4.0},
    "vein": {"marker": "h", "color": "#c08a1e", "markersize": 5.5},
    "hinge_line": {"marker": "D", "color": "#111111", "markersize": 6.0},
    "lineation": {"marker": "P", "color": "#3b7d3a", "markersize": 6.5},
    "slickenline": {"marker": ">", "color": "#b3261e", "markersize": 6.0},
    "intersection_lineation": {"marker": "X", "color": "#5d5d8a", "markersize": 6.0},
}
_OTHER = {"marker": "o", "color": "#555555", "markersize": 4.5}


def _fmt_line(trend: float, plunge: float) -> str:
    return f"{plunge:02.0f}\u2192{trend:03.0f}"


def plot_stereonet(
    attitudes: pd.DataFrame,
    *,
    fit: FoldFit | None = None,
    title: str | None = None,
    density_feature: str = "bedding",
    sigma: float = 3.0,
) -> Figure:
    """Draw one domain's lower-hemisphere equal-area stereonet.

    Parameters
    ----------
    attitudes : pandas.DataFrame
        Attitude-table rows of the domain (``feature``, ``kind``,
        ``dip_direction``, ``dip``, ``trend``, ``plunge``).
    fit : FoldFit, optional
        Fold fitted to the domain: adds the pi-girdle, the axis with its cone,
        the axial plane and the summary box. Keyword only.
    title : str, optional
        Figure title.
    density_feature : str
        Feature whose poles are contoured (exponential Kamb, Vollmer 1995, in
        multiples of sigma) when there are at least 3 of them.
    sigma : float
        Counting-area size of the density, see :func:`thrustmap.stats.density`.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import pandas as pd
    >>> rows = pd.DataFrame({"feature": ["bedding"] * 4, "kind": "plane",
    ...     "dip_direction": [90, 270, 95, 265], "dip": [30, 40, 35, 45],
    ...     "trend": float("nan"), "plunge": float("nan")})
    >>> fig = plot_stereonet(rows, title="D1")
    >>> len(fig.axes) >= 1
    True
    """
    fig = Figure(figsize=(6.0, 7.4), dpi=100, facecolor="white")
    ax = fig.add_axes((0.11, 0.262, 0.78, 0.632), projection="equal_area_stereonet")
    ax.grid(True, color="#c9ccd1", linewidth=0.5, alpha=0.7)
    ax.set_azimuth_ticks(
        [0, 90, 180, 270], labels=["N", "E", "S", "W"], fontsize=12, color=INK, fontweight="bold"
    )
    for spine in ax.spines.values():
        spine.set_edgecolor(INK)
        spine.set_linewidth(1.4)

    rows = attitudes
    planes = rows[(rows["kind"] == "plane") & rows["dip"].notna() & rows["dip_direction"].notna()]
    lines = rows[(rows["kind"] == "line") & rows["trend"].notna() & rows["plunge"].notna()]
    handles = []
    _density(ax, fig, planes[planes["feature"] == density_feature], sigma)

    # Poles are drawn as the lines they are; mplstereonet writes into its inputs, so copies.
    pole_trend, pole_plunge = plane_to_pole(
        planes["dip_direction"].to_numpy(float), planes["dip"].to_numpy(float)
    )
    groups = [
        (
            f,
            np.array(pole_plunge[planes["feature"].to_numpy() == f]),
            np.array(pole_trend[planes["feature"].to_numpy() == f]),
            " poles",
        )
        for f in sorted(planes["feature"].unique())
    ] + [
        (f, np.array(g["plunge"], dtype=float), np.array(g["trend"], dtype=float), "")
        for f, g in lines.groupby("feature", sort=True)
    ]
    for feature, plunge, trend, suffix in groups:
        style = FEATURE_STYLES.get(str(feature), _OTHER)
        ax.line(
            plunge,
            trend,
            linestyle="none",
            markeredgecolor="white",
            markeredgewidth=0.5,
            zorder=4,
            **style,
        )
        handles.append(_handle(style, f"{_label(feature)}{suffix} ({plunge.size})"))

    if fit is not None:
        handles.extend(_fold(ax, fit))
        _summary(fig, fit)
    if title:
        fig.text(
            0.5, 0.982, title, ha="center", va="top", fontsize=16, fontweight="bold", color=INK
        )
    fig.text(
        0.5, 0.948, "lower hemisphere, equal area", ha="center", va="top", fontsize=9, color=MUTED
    )
    if handles:
        fig.legend(
            handles=handles,
            loc="lower right",
            bbox_to_anchor=(0.985, 0.012),
            fontsize=7.5,
            frameon=False,
            handlelength=1.5,
            borderaxespad=0.2,
            labelcolor=INK,
            ncol=2 if len(handles) > 5 else 1,
            columnspacing=1.0,
        )
    return fig


def _label(feature: object) -> str:
    return str(feature).replace("_", " ")


def _handle(style: dict[str, object], label: str) -> Line2D:
    return Line2D(
        [], [], linestyle="none", markeredgecolor="white", markeredgewidth=0.5, label=label, **style
    )


def _density(ax, fig: Figure, planes: pd.DataFrame, sigma: float) -> None:
    if len(planes) < 3:
        return
    trend, plunge = plane_to_pole(
        planes["dip_direction"].to_numpy(float), planes["dip"].to_numpy(float)
    )
    grid = density(trend, plunge, sigma=sigma, gridsize=120)
    top = float(grid.values.max())
    if top <= 2.0:
        return
    step = 2.0 if top < 16 else float(np.ceil(top / 8.0))
    levels = np.arange(step, top + step, step)
    filled = ax.contourf(
        grid.lon, grid.lat, grid.values, levels=levels, cmap=DENSITY_CMAP, zorder=1
    )
    ax.contour(
        grid.lon,
        grid.lat,
        grid.values,
        levels=levels,
        colors="#7a4a2a",
        linewidths=0.45,
        alpha=0.6,
        zorder=2,
    )
    cax = fig.add_axes((0.3, 0.19, 0.4, 0.012))
    bar = fig.colorbar(filled, cax=cax, orientation="horizontal")
    bar.set_label("pole density (multiples of \u03c3)", fontsize=8, color=INK, labelpad=2)
    bar.ax.tick_params(labelsize=7, length=2, colors=INK)
    bar.outline.set_linewidth(0.5)


def _fold(ax, fit: FoldFit) -> list[Line2D]:
    girdle_strike = dip_direction_to_strike(fit.girdle_dip_direction)
    ax.plane(girdle_strike, fit.girdle_dip, zorder=3, **GIRDLE)
    ax.plane(
        dip_direction_to_strike(fit.axial_plane_dip_direction),
        fit.axial_plane_dip,
        zorder=3,
        **AXIAL_PLANE,
    )
    handles = [
        Line2D([], [], label="\u03c0-girdle", **GIRDLE),
        Line2D([], [], label="axial plane", **AXIAL_PLANE),
    ]
    if np.isfinite(fit.cone95) and fit.cone95 > 0:
        ax.cone(
            fit.axis_plunge,
            fit.axis_trend,
            min(fit.cone95, 89.0),
            bidirectional=True,
            zorder=5,
            **CONE,
        )
    ax.line(fit.axis_plunge, fit.axis_trend, zorder=6, **AXIS)
    handles.append(Line2D([], [], linestyle="none", label="fold axis + 95% cone", **AXIS))
    if fit.hinge_n:
        ax.line(fit.hinge_plunge, fit.hinge_trend, zorder=5.5, **HINGE)
        handles.append(Line2D([], [], linestyle="none", label="mean hinge line", **HINGE))
    return handles


def _summary(fig: Figure, fit: FoldFit) -> None:
    cone = "n/a" if not np.isfinite(fit.cone95) else f"{fit.cone95:.1f}\u00b0"
    text = "\n".join(
        [
            f"N          {fit.n}",
            f"axis       {_fmt_line(fit.axis_trend, fit.axis_plunge)} \u00b1{cone}",
            f"interlimb  {fit.interlimb_angle:.0f}\u00b0 {fit.tightness}",
            f"axial pl.  {fit.axial_plane_dip_direction:03.0f}/{fit.axial_plane_dip:02.0f}",
        ]
    )
    fig.text(
        0.025,
        0.022,
        text,
        ha="left",
        va="bottom",
        fontsize=10.5,
        family="DejaVu Sans Mono",
        color=INK,
        linespacing=1.45,
        bbox={
            "boxstyle": "round,pad=0.5",
            "facecolor": "#f6f7f9",
            "edgecolor": "#b9bec6",
            "linewidth": 0.8,
        },
    )


def _safe_name(name: str) -> str:
    return re.sub(r"[^A-Za-z0-9_.-]+", "_", str(name)).strip("._") or "domain"


def stereonet_filename(domain: object, suffix: str) -> str:
    """File name of a domain's stereonet figure, e.g. ``stereonet_D1.png``.

    Examples
    --------
    >>> stereonet_filename("D 1/a", "svg")
    'stereonet_D_1_a.svg'
    """
    return f"stereonet_{_safe_name(str(domain))}.{suffix}"


def write_stereonet(
    attitudes: pd.DataFrame,
    folder: str | os.PathLike,
    name: str,
    *,
    fit: FoldFit | None = None,
    title: str | None = None,
    formats: tuple[str, ...] = ("png", "svg"),
    overwrite: bool = False,
) -> list[Path]:
    """Draw a stereonet (see :func:`plot_stereonet`) and write it in each format.

    Parameters
    ----------
    attitudes : pandas.DataFrame
        Attitude-table rows to plot.
    folder : path-like
        Output folder, created if needed.
    name : str
        Base of the file names, ``stereonet_<name>.<format>`` (characters
        unsafe in file names replaced by ``_``).
    fit, title
        As for :func:`plot_stereonet`. Keyword only.
    formats : tuple of str
        Any of ``png``, ``svg``, ``pdf``.
    overwrite : bool
        Replace existing files.

    Returns
    -------
    list of pathlib.Path

    Raises
    ------
    ParameterError
        An unknown format.
    OutputExistsError
        A file exists and ``overwrite`` is False.

    Examples
    --------
    >>> import tempfile
    >>> rows = pd.DataFrame({"feature": "bedding", "kind": "plane", "dip_direction": [90, 270],
    ...     "dip": [30, 40], "trend": float("nan"), "plunge": float("nan")})
    >>> [p.name for p in write_stereonet(rows, tempfile.mkdtemp(), "D1", formats=("svg",))]
    ['stereonet_D1.svg']
    """
    fig = plot_stereonet(attitudes, fit=fit, title=title)
    # save_figure gives the stem each format's suffix in turn
    stem = Path(folder) / stereonet_filename(name, "png")
    return save_figure(fig, stem, formats=formats, overwrite=overwrite)


def write_domain_stereonets(
    result: DomainStatistics,
    folder: str | os.PathLike,
    *,
    formats: tuple[str, ...] = ("png", "svg"),
    overwrite: bool = False,
) -> list[Path]:
    """Write one stereonet per domain of a :func:`thrustmap.domains.domain_statistics` result.

    Parameters
    ----------
    result : thrustmap.domains.DomainStatistics
    folder : path-like
        Output folder (``out/figures`` in a run).
    formats : tuple of str
        Keyword only.
    overwrite : bool

    Returns
    -------
    list of pathlib.Path
        Every file written, domain by domain.

    Raises
    ------
    OutputExistsError
        A file exists and ``overwrite`` is False.

    Examples
    --------
    >>> import tempfile
    >>> import geopandas as gpd
    >>> from thrustmap.domains import domain_statistics
    >>> att = gpd.GeoDataFrame({"feature": "bedding", "kind": "plane",
    ...     "dip_direction": [90, 270, 95, 265, 85, 275], "dip": [30, 30, 40, 40, 20, 20],
    ...     "trend": float("nan"), "plunge": float("nan")},
    ...     geometry=gpd.points_from_xy(range(6), range(6)))
    >>> res = domain_statistics(att, n_boot=0)
    >>> [p.name for p in write_domain_stereonets(res, tempfile.mkdtemp(), formats=("png",))]
    ['stereonet_all.png']
    """
    paths: list[Path] = []
    by_domain = dict(tuple(result.attitudes.groupby(DOMAIN_COLUMN, sort=False)))
    for name in result.domains[DOMAIN_COLUMN]:
        rows = by_domain.get(name, result.attitudes.iloc[0:0])
        fit = result.fits.get(name)
        paths += write_stereonet(
            rows,
            folder,
            name,
            fit=fit,
            title=f"Domain {name}",
            formats=formats,
            overwrite=overwrite,
        )
    return paths
