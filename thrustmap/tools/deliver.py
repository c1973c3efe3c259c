"""Tool declarations for the deliverables: the offline web map and the review report."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pandas as pd

from thrustmap.errors import ParameterError
from thrustmap.report import write_report
from thrustmap.tools.declare import LayerInput, LayerOutput, Param, Tool
from thrustmap.webmap import write_map

__all__ = ["TOOLS", "web_map_tool", "review_report_tool", "WEB_MAP", "REVIEW_REPORT"]


def _out(out: str | None, tool: str) -> Path:
    if not out:
        raise ParameterError(f"{tool}: parameter 'out' (the file to write) is required")
    return Path(out)


def _figures(folder: str | None, domains: pd.DataFrame | None) -> dict[str, Path]:
    """PNG files named after a domain (``D1.png`` or ``<anything>_D1.png``) in ``folder``."""
    if not folder or domains is None or "domain" not in domains.columns:
        return {}
    pngs = sorted(Path(folder).glob("*.png"))
    found = {}
    for name in domains["domain"].astype(str):
        match = [p for p in pngs if p.stem == name or p.stem.endswith(f"_{name}")]
        if match:
            found[name] = match[0]
    return found


def web_map_tool(
    attitudes: Any = None,
    thrust_traces: Any = None,
    thrust_sheets: Any = None,
    domains: Any = None,
    fold_axes: Any = None,
    *,
    out: str | None = None,
    title: str = "thrustmap structural map",
    figures_dir: str | None = None,
    symbol_size: float = 9.0,
    online_basemap: bool = True,
    overwrite: bool = False,
) -> dict[str, pd.DataFrame]:
    """Write the offline web map of the given layers; returns a count of features per layer.

    Examples
    --------
    >>> import tempfile, pathlib, geopandas as gpd, shapely
    >>> d = gpd.GeoDataFrame({"domain": ["D1"]}, geometry=[shapely.box(7e5, 5.09e6, 7.1e5, 5.1e6)],
    ...                      crs="EPSG:32633")
    >>> out = pathlib.Path(tempfile.mkdtemp()) / "map.html"
    >>> web_map_tool(domains=d, out=str(out))["map_summary"].to_dict("records")
    [{'layer': 'domains', 'features': 1, 'file': 'map.html'}]
    """
    path = _out(out, "web_map")
    layers = {"attitudes": attitudes, "thrust_traces": thrust_traces,
              "thrust_sheets": thrust_sheets, "domains": domains, "fold_axes": fold_axes}
    write_map(path, attitudes=attitudes, thrusts=thrust_traces, sheets=thrust_sheets,
              domains=domains, fold_axes=fold_axes, figures=_figures(figures_dir, domains),
              title=title, symbol_size=symbol_size, online_basemap=online_basemap,
              overwrite=overwrite)
    rows = [(k, len(v), path.name) for k, v in layers.items() if v is not None]
    return {"map_summary": pd.DataFrame(rows, columns=["layer", "features", "file"])}


def review_report_tool(
    attitudes: Any = None,
    attitudes_rejected: Any = None,
    domains: Any = None,
    fold_axes: Any = None,
    spacing: Any = None,
    thrust_traces: Any = None,
    thrust_relations: Any = None,
    *,
    out: str | None = None,
    title: str = "thrustmap review report",
    figures_dir: str | None = None,
    overwrite: bool = False,
) -> dict[str, pd.DataFrame]:
    """Write the review report (HTML and Markdown); returns the files written.

    Examples
    --------
    >>> import tempfile, pathlib, pandas as pd
    >>> out = pathlib.Path(tempfile.mkdtemp()) / "report.html"
    >>> files = review_report_tool(spacing=pd.DataFrame({"spacing_m": [2000.0]}), out=str(out))
    >>> sorted(files["report_files"]["kind"])
    ['html', 'markdown']
    """
    path = _out(out, "review_report")
    figures = sorted(Path(figures_dir).glob("*.png")) if figures_dir else []
    written = write_report(
        path, attitudes=attitudes, rejected=attitudes_rejected, domain_stats=domains,
        fold_table=fold_axes, figures={p.stem: p for p in figures}, spacing=spacing,
        formation_order=thrust_traces, relations=thrust_relations, title=title,
        overwrite=overwrite,
    )
    return {"report_files": pd.DataFrame(
        [(k, p.name) for k, p in written.items()], columns=["kind", "file"])}


_OUT = Param("out", "str", None, help="File to write (.html).")
_OVERWRITE = Param("overwrite", "bool", False, help="Replace existing outputs.")
_FIGURES = Param("figures_dir", "str", None,
                 help="Folder of stereonet PNGs; a file named after a domain goes in its popup.")

WEB_MAP = Tool(
    name="web_map",
    summary="Self-contained offline web map: strike/dip symbols, thrusts, sheets, domains, fold axes.",
    func=web_map_tool,
    group="deliver",
    inputs=(
        LayerInput("attitudes", "point", "Accepted attitudes (true north).", optional=True),
        LayerInput("thrust_traces", "line", "Thrust traces with hanging-wall side and rank.",
                   optional=True),
        LayerInput("thrust_sheets", "polygon", "Thrust sheets.", optional=True),
        LayerInput("domains", "polygon", "Structural domains with statistics.", optional=True),
        LayerInput("fold_axes", "any", "Fold axes with trend and plunge.", optional=True),
    ),
    params=(
        _OUT,
        Param("title", "str", "thrustmap structural map", help="Map title."),
        _FIGURES,
        Param("symbol_size", "float", 9.0, help="Half-length of a strike line.", unit="pixels",
              minimum=2.0, maximum=100.0),
        Param("online_basemap", "bool", True,
              help="Offer an online base map toggle (off at opening)."),
        _OVERWRITE,
    ),
    outputs=(LayerOutput("map_summary", "table", "Features drawn per layer."),),
)

REVIEW_REPORT = Tool(
    name="review_report",
    summary="Review report (HTML and Markdown): validation, domain statistics, folds, spacing, order.",
    func=review_report_tool,
    group="deliver",
    inputs=(
        LayerInput("attitudes", "point", "Accepted attitudes.", optional=True),
        LayerInput("attitudes_rejected", "table", "Rejected rows with reason codes.",
                   optional=True),
        LayerInput("domains", "polygon", "Domains with their statistics.", optional=True),
        LayerInput("fold_axes", "any", "Fold table.", optional=True),
        LayerInput("spacing", "table", "Thrust spacing per pair (spacing_m).", optional=True),
        LayerInput("thrust_traces", "line", "Thrusts with formation rank.", optional=True),
        LayerInput("thrust_relations", "table", "Evidence for the formation order.",
                   optional=True),
    ),
    params=(
        _OUT,
        Param("title", "str", "thrustmap review report", help="Report title."),
        _FIGURES,
        _OVERWRITE,
    ),
    outputs=(LayerOutput("report_files", "table", "Files written."),),
)

TOOLS = (WEB_MAP, REVIEW_REPORT)
