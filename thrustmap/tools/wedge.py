"""Tool declarations for wedge mechanics, surface profiles and sections.

Each tool is a thin wrapper: it resolves its inputs and calls the plain
functions of :mod:`thrustmap.profiles`, :mod:`thrustmap.wedge` and
:mod:`thrustmap.sections`.
"""

from __future__ import annotations

import logging
from pathlib import Path
from typing import Any

import geopandas as gpd
import numpy as np
import pandas as pd
import shapely

from thrustmap.errors import InputError, ParameterError
from thrustmap.figures import figure_writer
from thrustmap.north import true_to_grid
from thrustmap.profiles import plot_profiles, sample_profiles, surface_profiles, transport_lines
from thrustmap.sections import (
    _true_to_grid,
    build_section,
    down_plunge,
    plot_down_plunge,
    plot_section,
)
from thrustmap.tools._sample import SAMPLE, sample_attitudes, scenario
from thrustmap.tools.declare import Example, FileOutput, LayerInput, LayerOutput, Param, Tool
from thrustmap.wedge import (
    METHODS,
    SETTINGS,
    assess_wedge,
    envelope,
    plot_envelope,
    state_probabilities,
)

__all__ = ["TOOLS", "SURFACE_PROFILES", "WEDGE_TAPER", "SECTION", "DOWN_PLUNGE"]

log = logging.getLogger(__name__)


def _load_grid(path: str | None) -> Any:
    """The elevation grid at ``path`` (ESRI ASCII grid with a .prj sidecar), or None."""
    if path is None:
        return None
    if Path(path).suffix.lower() != ".asc":
        raise ParameterError(
            f"elevation = {path!r}: give an ESRI ASCII grid (.asc with its .prj); convert other "
            "rasters first (e.g. gdal_translate -of AAIGrid)"
        )
    from thrustmap.io.grid import read_ascii_grid

    return read_ascii_grid(path)


def _surface_profiles(
    study_area: gpd.GeoDataFrame | None,
    profile_lines: gpd.GeoDataFrame | None,
    thrust_traces: gpd.GeoDataFrame | None,
    *,
    elevation: str | None,
    azimuth: float | None,
    spacing: float,
    step: float | None,
    window_start: float | None,
    window_end: float | None,
    break_distance: float | None,
    break_thrust: str | None,
    toe_thrust: str | None,
    min_samples: int,
) -> dict[str, Any]:
    if elevation is None:
        raise ParameterError("surface-profiles: parameter 'elevation' (path to the elevation grid) is required")
    if profile_lines is None:
        if study_area is None or azimuth is None:
            raise ParameterError(
                "surface-profiles: give profile_lines, or a study_area with the transport azimuth"
            )
        profile_lines = transport_lines(study_area, azimuth=azimuth, spacing=spacing)
    grid = _load_grid(elevation)
    profiles = surface_profiles(
        profile_lines, grid, azimuth=azimuth, step=step, window_start=window_start,
        window_end=window_end, break_distance=break_distance, thrusts=thrust_traces,
        break_thrust=break_thrust, toe_thrust=toe_thrust, min_samples=min_samples,
    )
    samples = sample_profiles(profiles, grid, step=step)
    draw = figure_writer(lambda: plot_profiles(samples, profiles, title="Transport-parallel surface profiles"), uses=2)
    return {"profiles": profiles, "profiles_png": draw, "profiles_svg": draw}


def _alpha_from_profiles(profiles: gpd.GeoDataFrame | None, field: str) -> tuple[float, float, str]:
    """Median slope of the profiles in ``field`` and its spread (degrees)."""
    if profiles is None or field not in profiles.columns:
        raise ParameterError(f"wedge-taper: give alpha, or a profiles layer with an {field} field")
    alpha = pd.to_numeric(profiles[field], errors="coerce").to_numpy(float)
    ok = np.isfinite(alpha)
    if not ok.any():
        raise InputError("no profile has a surface slope", layer="profiles", field=field)
    half = np.nan
    if {f"{field}_low", f"{field}_high"} <= set(profiles.columns):
        width = (pd.to_numeric(profiles[f"{field}_high"], errors="coerce")
                 - pd.to_numeric(profiles[f"{field}_low"], errors="coerce")).to_numpy(float)[ok]
        half = float(np.nanmedian(width)) / (2 * 1.96) if np.isfinite(width).any() else np.nan
    spread = float(np.std(alpha[ok], ddof=1)) if ok.sum() > 1 else 0.0
    sd = float(np.nanmax([spread, half, 0.0]))
    return float(np.median(alpha[ok])), sd, f"profiles {field} (median of {int(ok.sum())})"


def _wedge_taper(
    profiles: gpd.GeoDataFrame | None,
    *,
    alpha: float | None,
    profile_slope: str,
    alpha_sd: float | None,
    beta: float | None,
    beta_sd: float,
    friction: float,
    basal_friction: float,
    pore_ratio: float,
    basal_pore_ratio: float | None,
    setting: str,
    method: str,
    fluid_density: float,
    rock_density: float,
    tolerance: float,
    samples: int,
    seed: int,
) -> dict[str, Any]:
    if beta is None:
        raise ParameterError("wedge-taper: parameter 'beta' (decollement dip, degrees) is required")
    source = "given"
    if alpha is None:
        alpha, spread, source = _alpha_from_profiles(profiles, profile_slope)
        alpha_sd = spread if alpha_sd is None else alpha_sd
    kw = dict(friction=friction, basal_friction=basal_friction, pore_ratio=pore_ratio,
              basal_pore_ratio=basal_pore_ratio, setting=setting, method=method,
              fluid_density=fluid_density, rock_density=rock_density)
    sd = alpha_sd or 0.0
    odds = state_probabilities(alpha, beta, alpha_sd=sd, beta_sd=beta_sd, tolerance=tolerance,
                               samples=samples, seed=seed, **kw)
    taper = assess_wedge(alpha, beta, alpha_sd=sd, beta_sd=beta_sd, tolerance=tolerance,
                         samples=samples, seed=seed, uncertainty=odds, **kw)
    taper.insert(1, "alpha_source", source)
    env = envelope(**kw)
    draw = figure_writer(lambda: plot_envelope(
        env, alpha=alpha, beta=beta, alpha_sd=sd, beta_sd=beta_sd, uncertainty=odds,
        title=f"Critical taper ({method}, {setting}): {taper['state'].iloc[0]}"), uses=2)
    return {"taper": taper, "taper_envelope": env, "taper_png": draw, "taper_svg": draw}


def _pick(layer: gpd.GeoDataFrame, section_id: str | None, name: str) -> tuple[gpd.GeoDataFrame, Any]:
    """One row of a line layer, by its section_id or profile_id, and the id."""
    for field in ("section_id", "profile_id"):
        if field in layer.columns:
            ids = layer[field]
            if section_id is None:
                return layer.iloc[[0]], ids.iloc[0]
            chosen = layer[ids.astype(str) == str(section_id)]
            if chosen.empty:
                raise ParameterError(
                    f"section_id = {section_id!r} is not a {field} of layer {name}; ids are: "
                    + ", ".join(ids.astype(str).tolist()[:20])
                )
            return chosen.iloc[[0]], chosen[field].iloc[0]
    if section_id is not None:
        raise ParameterError(f"layer {name} has no section_id or profile_id field to pick {section_id!r}")
    return layer.iloc[[0]], 1


def _section(
    attitudes: gpd.GeoDataFrame,
    section_line: gpd.GeoDataFrame | None,
    profiles: gpd.GeoDataFrame | None,
    thrust_traces: gpd.GeoDataFrame | None,
    *,
    elevation: str | None,
    section_id: str | None,
    buffer: float,
    step: float | None,
    vertical_exaggeration: float,
    decollement_distance: float | None,
    decollement_elevation: float | None,
    decollement_dip: float | None,
) -> dict[str, Any]:
    source, name = (section_line, "section_line") if section_line is not None else (profiles, "profiles")
    if source is None or source.empty:
        raise ParameterError("section: give a section_line layer or a profiles layer to draw the section along")
    line, sid = _pick(source, section_id, name)
    layers = build_section(line.geometry, attitudes, buffer=buffer, thrusts=thrust_traces,
                           grid=_load_grid(elevation), step=step, section_id=sid)
    base = (decollement_distance, decollement_elevation, decollement_dip)
    if any(v is not None for v in base) and any(v is None for v in base):
        raise ParameterError(
            "section: give all of decollement_distance, decollement_elevation and decollement_dip, or none"
        )
    decollement = None if base[0] is None else base
    draw = figure_writer(lambda: plot_section(layers, vertical_exaggeration=vertical_exaggeration,
                                              decollement=decollement), uses=2)
    return {**layers, "section_png": draw, "section_svg": draw}


def _down_plunge(
    attitudes: gpd.GeoDataFrame,
    domains: gpd.GeoDataFrame | None,
    *,
    axis_trend: float | None,
    axis_plunge: float | None,
    domain: str | None,
    features: str | None,
    elevation: str | None,
) -> dict[str, Any]:
    if axis_trend is None or axis_plunge is None:
        raise ParameterError("down-plunge: parameters 'axis_trend' and 'axis_plunge' (the fold axis) are required")
    chosen = attitudes
    wanted = [f.strip() for f in (features or "").split(",") if f.strip()]
    if wanted:
        if "feature" not in attitudes.columns:
            raise InputError("missing column feature (needed to select features)", layer="attitudes",
                             field="feature")
        chosen = chosen[chosen["feature"].astype(str).isin(wanted).to_numpy()]
    if domain is not None:
        if domains is not None:
            if "domain" not in domains.columns:
                raise InputError("missing column domain", layer="domains", field="domain")
            polygons = domains[domains["domain"].astype(str) == str(domain)]
            if polygons.empty:
                raise ParameterError(
                    f"domain = {domain!r} is not in layer domains; domains are: "
                    + ", ".join(domains["domain"].astype(str).tolist())
                )
            inside = chosen.geometry.within(polygons.geometry.union_all())
            chosen = chosen[inside.to_numpy()]
        elif "domain" in chosen.columns:
            chosen = chosen[chosen["domain"].astype(str) == str(domain)]
        else:
            raise ParameterError("down-plunge: selecting a domain needs a domains layer or a domain field")
    if chosen.empty:
        raise ParameterError(
            f"down-plunge: no attitudes left (domain {domain!r}, features {', '.join(wanted) or 'all'})"
        )
    # the axis is given in true north; the view is built in grid north
    if "convergence" in chosen.columns and chosen["convergence"].notna().any():
        trend_grid = float(true_to_grid(float(axis_trend), float(chosen["convergence"].mean())))
    else:
        centre = np.asarray(chosen.geometry.union_all().centroid.coords)
        trend_grid = float(_true_to_grid(np.array([float(axis_trend)]), centre, chosen.crs)[0][0])
    view = down_plunge(chosen, trend_grid=trend_grid, plunge=axis_plunge, grid=_load_grid(elevation))
    if "domain" not in view.columns:
        view.insert(0, "domain", "" if domain is None else str(domain))
    draw = figure_writer(lambda: plot_down_plunge(
        view, title=f"Down-plunge view, {'domain ' + str(domain) if domain else 'all stations'}: "
                    f"{float(axis_plunge):.0f} -> {float(axis_trend):03.0f} (true)"), uses=2)
    return {"section_down_plunge": view, "down_plunge_png": draw, "down_plunge_svg": draw}


_SAMPLE_ELEVATION = str(SAMPLE / "elevation.asc")
_TRANSPORT_GRID = 20.0  # the scenario's transport azimuth, grid north


def _profiles_example(folder: Path) -> dict[str, str]:
    return {"study_area": scenario("study_area"), "thrust_traces": scenario("thrust_traces")}


def _taper_example(folder: Path) -> dict[str, Any]:
    return {}


def _section_example(folder: Path) -> dict[str, Any]:
    a = np.radians(_TRANSPORT_GRID)
    centre, u = np.array([715000.0, 5095000.0]), np.array([np.sin(a), np.cos(a)])
    line = gpd.GeoDataFrame({"section_id": ["A"]}, geometry=[shapely.LineString([centre - 14000 * u,
                                                                                centre + 14000 * u])],
                            crs=sample_attitudes().crs)
    return {"attitudes": sample_attitudes(), "section_line": line, "thrust_traces": scenario("thrust_traces")}


def _down_plunge_example(folder: Path) -> dict[str, Any]:
    return {"attitudes": sample_attitudes(), "domains": scenario("domains")}


_ELEVATION = Param("elevation", "file", None, "Elevation grid: path of an ESRI ASCII grid (.asc, with its .prj) "
                   "in the working CRS; a relative path is read from the working folder (in a project file, "
                   "from the project file's folder).")

SURFACE_PROFILES = Tool(
    name="surface-profiles",
    summary="Transport-parallel topographic profiles with robust regional, rear and frontal surface slopes.",
    func=_surface_profiles,
    inputs=(
        LayerInput("study_area", "polygon", "Area to cover with profile lines.", optional=True),
        LayerInput("profile_lines", "line", "Profile lines drawn by hand (instead of generated ones).",
                   optional=True),
        LayerInput("thrust_traces", "line", "Thrust traces, to split rear and frontal slopes at a thrust.",
                   optional=True),
    ),
    params=(
        _ELEVATION,
        Param("azimuth", "float", None, "Transport direction (toward the foreland), clockwise from grid north.",
              unit="degrees", minimum=0.0, maximum=360.0),
        Param("spacing", "float", 5000.0, "Distance between generated profile lines.", unit="metres",
              minimum=1.0),
        Param("step", "float", None, "Sample spacing along the profiles (default one grid cell).",
              unit="metres", minimum=0.01),
        Param("window_start", "float", None, "Start of the fitted part of each profile, from its rear end.",
              unit="metres", minimum=0.0),
        Param("window_end", "float", None, "End of the fitted part of each profile, from its rear end.",
              unit="metres", minimum=0.0),
        Param("break_distance", "float", None, "Split between rear and frontal slopes (default: fitted).",
              unit="metres", minimum=0.0),
        Param("break_thrust", "str", None, "thrust_id of the thrust at which to split rear and frontal slopes."),
        Param("toe_thrust", "str", None, "thrust_id of the frontal thrust; the foreland beyond it is left out."),
        Param("min_samples", "int", 10, "Fewest valid samples for a slope.", minimum=3),
    ),
    outputs=(
        LayerOutput("profiles", "line", "Profile lines with regional, rear and frontal slopes."),
        FileOutput("profiles_png", "figures/profiles.png", "Elevation along the profiles with fitted slopes."),
        FileOutput("profiles_svg", "figures/profiles.svg", "The same figure as SVG."),
    ),
    group="wedge",
    example=Example(
        _profiles_example,
        {"elevation": _SAMPLE_ELEVATION, "azimuth": _TRANSPORT_GRID, "spacing": 5000.0, "break_thrust": "T3",
         "toe_thrust": "T5"},
        "Profiles every 5 km across the synthetic study area, rear and frontal slopes split at thrust T3 "
        "and ended at the frontal thrust T5.",
    ),
)

WEDGE_TAPER = Tool(
    name="wedge-taper",
    summary="Critical-taper state of the wedge (Dahlen 1984 exact / Davis, Suppe & Dahlen 1983 small-angle), "
            "its envelope and the pore-fluid ratio that would make it critical.",
    func=_wedge_taper,
    inputs=(LayerInput("profiles", "line", "Profiles from surface-profiles, for alpha when not given.",
                       optional=True),),
    params=(
        Param("alpha", "float", None, "Surface slope, positive toward the foreland (default: profiles' median).",
              unit="degrees", minimum=-89.0, maximum=89.0),
        Param("profile_slope", "choice", "alpha", "Which profile slope stands for alpha when it is not given: "
              "regional, frontal or rear.", choices=("alpha", "alpha_front", "alpha_rear")),
        Param("alpha_sd", "float", None, "Standard deviation of alpha (default: spread of the profiles).",
              unit="degrees", minimum=0.0),
        Param("beta", "float", None, "Decollement dip, positive toward the hinterland (required).",
              unit="degrees", minimum=-89.0, maximum=89.0),
        Param("beta_sd", "float", 0.0, "Standard deviation of beta.", unit="degrees", minimum=0.0),
        Param("friction", "float", 30.0, "Angle of internal friction.", unit="degrees", minimum=0.1, maximum=89.9),
        Param("basal_friction", "float", 10.0, "Angle of friction on the decollement.", unit="degrees",
              minimum=0.1, maximum=89.9),
        Param("pore_ratio", "float", 0.0, "Pore-fluid ratio lambda of the wedge.", minimum=0.0, maximum=0.999),
        Param("basal_pore_ratio", "float", None, "Pore-fluid ratio lambda_b of the decollement "
              "(default: equal to pore_ratio).", minimum=0.0, maximum=0.999),
        Param("setting", "choice", "subaerial", "Whether water loads the wedge's surface.", choices=SETTINGS),
        Param("method", "choice", "exact", "Exact solution or small-angle approximation.", choices=METHODS),
        Param("fluid_density", "float", 1000.0, "Pore-fluid (sea water) density.", unit="kg/m3", minimum=1.0),
        Param("rock_density", "float", 2700.0, "Bulk rock density.", unit="kg/m3", minimum=1.0),
        Param("tolerance", "float", 0.25, "Half-width of the critical band in surface slope.", unit="degrees",
              minimum=0.0),
        Param("samples", "int", 10000, "Monte Carlo samples for the state probabilities.", minimum=100),
        Param("seed", "int", 0, "Random seed (same seed, same probabilities)."),
    ),
    outputs=(
        LayerOutput("taper", "table", "Measured wedge, critical slopes, state, probabilities, critical lambda."),
        LayerOutput("taper_envelope", "table", "Compressional and extensional branches of the envelope."),
        FileOutput("taper_png", "figures/taper_envelope.png", "Envelope with the measured wedge and its "
                   "uncertainty."),
        FileOutput("taper_svg", "figures/taper_envelope.svg", "The same figure as SVG."),
    ),
    group="wedge",
    example=Example(
        _taper_example,
        {"alpha": 2.0, "alpha_sd": 0.5, "beta": 3.0, "beta_sd": 1.0, "pore_ratio": 0.4, "samples": 2000},
        "A wedge with a 2 degree surface over a 3 degree decollement, dry-sand friction, lambda 0.4.",
    ),
)

SECTION = Tool(
    name="section",
    summary="Cross-section: attitudes projected with apparent dip, topography and thrust crossings.",
    func=_section,
    inputs=(
        LayerInput("attitudes", "point", "Attitude table (grid-north azimuth columns)."),
        LayerInput("section_line", "line", "Section lines; one is used.", optional=True),
        LayerInput("profiles", "line", "Profiles to draw the section along, when no section_line.",
                   optional=True),
        LayerInput("thrust_traces", "line", "Thrust traces with dip and hanging-wall side.", optional=True),
    ),
    params=(
        _ELEVATION,
        Param("section_id", "str", None, "section_id (or profile_id) of the line to use (default: the first)."),
        Param("buffer", "float", 1000.0, "Largest distance of projected attitudes from the line.",
              unit="metres", minimum=0.01),
        Param("step", "float", None, "Topography sample spacing (default one grid cell).", unit="metres",
              minimum=0.01),
        Param("vertical_exaggeration", "float", 2.0, "Vertical exaggeration of the section sketch.",
              unit="ratio", minimum=0.1, maximum=50.0),
        Param("decollement_distance", "float", None, "Distance along the section of a known point of the "
              "decollement (drawn when all three decollement values are given).", unit="metres", minimum=0.0),
        Param("decollement_elevation", "float", None, "Elevation of the decollement at that point.",
              unit="metres"),
        Param("decollement_dip", "float", None, "Apparent dip of the decollement, positive when it deepens "
              "toward the section's start.", unit="degrees", minimum=-89.0, maximum=89.0),
    ),
    outputs=(
        LayerOutput("section_line", "line", "The section line with its summary."),
        LayerOutput("section_points", "point", "Projected attitudes with distance, elevation, apparent dip."),
        LayerOutput("section_thrusts", "point", "Thrust crossings with dip and apparent dip."),
        LayerOutput("section_topography", "point", "Elevation along the section."),
        FileOutput("section_png", "figures/section.png", "Section sketch."),
        FileOutput("section_svg", "figures/section.svg", "The same figure as SVG."),
    ),
    group="wedge",
    example=Example(
        _section_example,
        {"elevation": _SAMPLE_ELEVATION, "buffer": 1500.0, "decollement_distance": 24000.0,
         "decollement_elevation": -2500.0, "decollement_dip": 3.0},
        "A 28 km section along transport through the synthetic belt, stations within 1.5 km.",
    ),
)

DOWN_PLUNGE = Tool(
    name="down-plunge",
    summary="Down-plunge projection of a domain's stations along its fold axis.",
    func=_down_plunge,
    inputs=(
        LayerInput("attitudes", "point", "Attitude table."),
        LayerInput("domains", "polygon", "Structural domains with a domain field.", optional=True),
    ),
    params=(
        Param("axis_trend", "float", None, "Fold-axis trend, clockwise from true north (required).",
              unit="degrees", minimum=0.0, maximum=360.0),
        Param("axis_plunge", "float", None, "Fold-axis plunge (required).", unit="degrees", minimum=0.0,
              maximum=90.0),
        Param("domain", "str", None, "Domain to project (default: every attitude)."),
        Param("features", "str", "bedding", "Comma-separated features to project (empty: all)."),
        _ELEVATION,
    ),
    outputs=(
        LayerOutput("section_down_plunge", "point", "Stations in the down-plunge view."),
        FileOutput("down_plunge_png", "figures/down_plunge.png", "Down-plunge view with plane traces."),
        FileOutput("down_plunge_svg", "figures/down_plunge.svg", "The same figure as SVG."),
    ),
    group="wedge",
    example=Example(
        _down_plunge_example,
        {"axis_trend": 114.3, "axis_plunge": 8.0, "domain": "D1", "elevation": _SAMPLE_ELEVATION},
        "Bedding of synthetic domain D1 viewed down its fold axis.",
    ),
)

TOOLS = (SURFACE_PROFILES, WEDGE_TAPER, SECTION, DOWN_PLUNGE)
