"""Declared tools for structural domains: thin declarations over :mod:`thrustmap.domains`."""

from __future__ import annotations

from functools import partial

import geopandas as gpd

from thrustmap.domains import (
    DOMAIN_COLUMN,
    domain_statistics,
    domains_from_attribute,
    domains_from_polygons,
)
from thrustmap.figures import figure_writer
from thrustmap.io.vocabulary import PLANE_FEATURES
from thrustmap.stereonet import plot_stereonet, stereonet_filename
from thrustmap.tools import LayerInput, LayerOutput, Param, Tool
from thrustmap.tools._sample import sample_attitudes, scenario
from thrustmap.tools.declare import Example, FileOutput

__all__ = ["DOMAIN_STATISTICS", "ASSIGN_DOMAINS", "TOOLS"]

_ATTITUDES = LayerInput(
    "attitudes", "point", help="Attitude table (as read by read-attitudes), in the working CRS."
)
_DOMAINS = LayerInput(
    "domains",
    "polygon",
    optional=True,
    help="Domain or thrust-sheet polygons; without it the attitudes' own id column is used.",
)
_ID_COLUMN = Param(
    "domain_field",
    "str",
    default="domain",
    help="Column naming the domain: in the polygon layer, or in the attitudes when no "
    "polygons are given.",
)


def _statistics(
    attitudes: gpd.GeoDataFrame,
    domains: gpd.GeoDataFrame | None,
    *,
    domain_field: str,
    fold_feature: str,
    n_boot: int,
    seed: int,
) -> dict[str, object]:
    result = domain_statistics(
        attitudes,
        domains,
        id_column=domain_field,
        fold_feature=fold_feature,
        n_boot=n_boot,
        seed=seed,
    )
    by_domain = dict(tuple(result.attitudes.groupby(DOMAIN_COLUMN, sort=False)))
    figures = {}
    for name in result.domains[DOMAIN_COLUMN]:
        rows = by_domain.get(name, result.attitudes.iloc[0:0])
        draw = partial(plot_stereonet, rows, fit=result.fits.get(name), title=f"Domain {name}")
        for suffix in ("png", "svg"):
            figures[stereonet_filename(name, suffix)] = figure_writer(draw)
    return {"domains": result.domains, "fold_axes": result.fold_axes, "stereonets": figures}


def _assign(
    attitudes: gpd.GeoDataFrame, domains: gpd.GeoDataFrame | None, *, domain_field: str
) -> dict[str, gpd.GeoDataFrame]:
    if domains is None:
        return {"assigned_attitudes": domains_from_attribute(attitudes, domain_field)}
    return {
        "assigned_attitudes": domains_from_polygons(attitudes, domains, id_column=domain_field)
    }


def _example(folder: object) -> dict[str, str]:
    return {"attitudes": sample_attitudes(), "domains": scenario("domains")}


DOMAIN_STATISTICS = Tool(
    name="domain-statistics",
    summary="Per structural domain: Fisher mean, precision and alpha95 of every feature type, "
    "fabric shape, and the fold in the bedding (pi-girdle axis with a bootstrap 95% cone, "
    "interlimb angle, Fleuty classes, axial plane).",
    func=_statistics,
    inputs=(_ATTITUDES, _DOMAINS),
    params=(
        _ID_COLUMN,
        Param(
            "fold_feature",
            "choice",
            default="bedding",
            help="Planar feature whose poles define the folds.",
            choices=PLANE_FEATURES,
        ),
        Param(
            "n_boot",
            "int",
            default=1000,
            help="Bootstrap resamples for the fold-axis confidence cone (0 skips it).",
            minimum=0,
            maximum=100000,
        ),
        Param("seed", "int", default=0, help="Seed of the bootstrap, for reproducible cones."),
    ),
    outputs=(
        LayerOutput("domains", "polygon", help="Domain polygons with their statistics."),
        LayerOutput(
            "fold_axes", "point", help="A point per folded domain with its axis and axial plane."
        ),
        FileOutput(
            "stereonets",
            "figures/stereonets/",
            help="A lower-hemisphere equal-area stereonet per domain, PNG and SVG.",
        ),
    ),
    group="structure",
    example=Example(_example, {"n_boot": 100}, "the synthetic scenario's stations and domains"),
)

ASSIGN_DOMAINS = Tool(
    name="assign-domains",
    summary="Put every attitude in the domain (or thrust sheet) polygon it lies in, or in "
    "the domain named by one of its columns; attitudes outside every polygon are "
    "'unassigned'. Overlapping polygons are an error.",
    func=_assign,
    inputs=(_ATTITUDES, _DOMAINS),
    params=(_ID_COLUMN,),
    outputs=(
        LayerOutput("assigned_attitudes", "point", help="The attitudes with a 'domain' column."),
    ),
    group="structure",
    example=Example(_example, {}, "the synthetic scenario's stations in its domain polygons"),
)

TOOLS = (DOMAIN_STATISTICS, ASSIGN_DOMAINS)
