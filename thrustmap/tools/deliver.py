"""Tool declarations for the deliverables: the offline web map and the review report.

Thin wrappers: they read the optional grid and figures named by parameters,
call :func:`thrustmap.webmap.map_html` and :func:`thrustmap.report.report_documents`,
and return the page contents; the runner writes them atomically.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pandas as pd

from thrustmap.domains import domains_from_polygons
from thrustmap.errors import ParameterError
from thrustmap.report import report_documents
from thrustmap.stereonet import plot_stereonet, stereonet_filename
from thrustmap.tools._sample import SAMPLE, scenario
from thrustmap.tools.declare import Example, FileOutput, LayerInput, Param, Tool
from thrustmap.tools.wedge import _load_grid  # elevation read as the wedge and section tools do
from thrustmap.webmap import map_html

__all__ = ["TOOLS", "WEB_MAP", "REVIEW_REPORT"]

def _pngs(folder: str | None) -> list[Path]:
    if folder is None:
        return []
    if not Path(folder).is_dir():
        raise ParameterError(f"figures_dir = {folder!r} is not a folder")
    return sorted(Path(folder).glob("*.png"))


def _domain_figures(folder: str | None, domains: pd.DataFrame | None) -> dict[str, Path]:
    """Each domain's stereonet in ``folder``: as domain-statistics names it, or ``<domain>.png``."""
    pngs = set(_pngs(folder))
    if not pngs or domains is None or "domain" not in domains.columns:
        return {}
    found = {}
    for name in domains["domain"].astype(str):
        for candidate in (Path(folder) / stereonet_filename(name, "png"), Path(folder) / f"{name}.png"):
            if candidate in pngs:
                found[name] = candidate
                break
    return found


def _drawn_stereonets(attitudes: Any, domains: Any) -> dict[str, Any]:
    """Each domain's stereonet drawn from the attitudes inside it (no fold fit).

    In a pipeline run the figures of domain-statistics are written only at the
    end, so the map and the report draw their own when no figures_dir is given.
    """
    if attitudes is None or domains is None or "domain" not in domains.columns:
        return {}
    if "kind" not in attitudes.columns:  # not an attitude table: nothing to plot
        return {}
    inside = domains_from_polygons(attitudes, domains)
    return {str(name): plot_stereonet(rows, title=f"Domain {name}")
            for name, rows in inside.groupby("domain", sort=False) if name != "unassigned"}


def _web_map(
    attitudes: Any = None,
    thrust_traces: Any = None,
    thrust_sheets: Any = None,
    domains: Any = None,
    fold_axes: Any = None,
    *,
    title: str,
    elevation: str | None,
    figures_dir: str | None,
    symbol_size: float,
    online_basemap: bool,
) -> dict[str, Any]:
    page = map_html(
        attitudes=attitudes, thrusts=thrust_traces, sheets=thrust_sheets, domains=domains,
        fold_axes=fold_axes, elevation=_load_grid(elevation),
        figures=_domain_figures(figures_dir, domains) if figures_dir
        else _drawn_stereonets(attitudes, domains), title=title, symbol_size=symbol_size,
        online_basemap=online_basemap,
    )
    return {"map": page}


def _review_report(
    attitudes: Any = None,
    attitudes_rejected: Any = None,
    domains: Any = None,
    fold_axes: Any = None,
    spacing: Any = None,
    thrust_traces: Any = None,
    thrust_relations: Any = None,
    *,
    title: str,
    figures_dir: str | None,
) -> dict[str, Any]:
    # The figures stay embedded in the HTML: the Markdown names them (the tool's
    # outputs are the two documents, whatever figures there are).
    docs = report_documents(
        attitudes=attitudes, rejected=attitudes_rejected, domain_stats=domains,
        fold_table=fold_axes, spacing=spacing,
        figures={p.stem: p for p in _pngs(figures_dir)} if figures_dir
        else _drawn_stereonets(attitudes, domains),
        formation_order=thrust_traces, relations=thrust_relations, title=title,
        figures_folder=None,
    )
    return {"report_html": docs.html, "report_md": docs.markdown}


def _example_attitudes() -> pd.DataFrame:
    """The scenario's stations as the attitude table ingest makes of them."""
    from thrustmap.io.attitudes import read_attitudes

    source, layer = scenario("stations").rsplit(":", 1)
    return read_attitudes(source, layer=layer).accepted


def _web_map_example(folder: Path) -> dict[str, Any]:
    return {"attitudes": _example_attitudes(), "thrust_traces": scenario("thrust_traces"),
            "domains": scenario("domains")}


def _report_example(folder: Path) -> dict[str, Any]:
    return {"attitudes": _example_attitudes(), "domains": scenario("domains"),
            "thrust_traces": scenario("thrust_traces")}


_TITLE_HELP = "Title shown on the page."
_FIGURES = Param("figures_dir", "str", None,
                 "Folder of stereonet PNGs (domain-statistics writes figures/stereonets/); in the "
                 "map, stereonet_D1.png (or D1.png) goes in domain D1's popup. Default: each "
                 "domain's stereonet drawn from the attitudes inside it.")

WEB_MAP = Tool(
    name="web-map",
    summary="Self-contained offline web map: strike/dip symbols, thrusts, sheets, domains, fold axes.",
    func=_web_map,
    inputs=(
        LayerInput("attitudes", "point", "Attitudes with true-north dip direction (or strike) and "
                   "dip, or trend and plunge.", optional=True),
        LayerInput("thrust_traces", "line", "Thrust traces with hanging-wall side and formation "
                   "rank.", optional=True),
        LayerInput("thrust_sheets", "polygon", "Thrust sheets.", optional=True),
        LayerInput("domains", "polygon", "Structural domains with their statistics.",
                   optional=True),
        LayerInput("fold_axes", "any", "Fold axes with trend and plunge.", optional=True),
    ),
    params=(
        Param("title", "str", "thrustmap structural map", _TITLE_HELP),
        Param("elevation", "str", None, "Elevation grid for the offline hillshade: path of an "
              "ESRI ASCII grid (.asc, with its .prj)."),
        _FIGURES,
        Param("symbol_size", "float", 9.0, "Half-length of a strike line.", unit="pixels",
              minimum=2.0, maximum=100.0),
        Param("online_basemap", "bool", True, "Offer an online base map toggle (off at opening)."),
    ),
    outputs=(FileOutput("map", "map.html", "The web map: one HTML file that works offline."),),
    group="deliver",
    example=Example(
        _web_map_example,
        {"elevation": str(SAMPLE / "elevation.asc"), "title": "Synthetic belt (invented data)"},
        "The synthetic scenario's stations, thrust traces and domains over its hillshade.",
    ),
)

REVIEW_REPORT = Tool(
    name="review-report",
    summary="Review report (HTML and Markdown): validation, domain statistics, folds, stereonets, "
            "spacing, formation order, caution.",
    func=_review_report,
    inputs=(
        LayerInput("attitudes", "point", "Accepted attitudes.", optional=True),
        LayerInput("attitudes_rejected", "table", "Rejected rows with reason codes.",
                   optional=True),
        LayerInput("domains", "polygon", "Domains with their statistics.", optional=True),
        LayerInput("fold_axes", "any", "Fold table.", optional=True),
        LayerInput("spacing", "table", "Thrust spacing statistics.", optional=True),
        LayerInput("thrust_traces", "line", "Thrusts with their formation rank.", optional=True),
        LayerInput("thrust_relations", "table", "Evidence for the formation order.",
                   optional=True),
    ),
    params=(Param("title", "str", "thrustmap review report", _TITLE_HELP), _FIGURES),
    outputs=(
        FileOutput("report_html", "report.html", "The report, self-contained."),
        FileOutput("report_md", "report.md", "Its Markdown twin (figures named, embedded in "
                   "the HTML)."),
    ),
    group="deliver",
    example=Example(
        _report_example,
        {"title": "Synthetic belt review (invented data)"},
        "A report on the synthetic scenario's stations, domains and thrust traces.",
    ),
)

TOOLS = (WEB_MAP, REVIEW_REPORT)
