"""Exports of a run's layers besides the GeoPackage: GeoJSON (RFC 7946) and Shapefile.

Each file is written atomically by :func:`thrustmap.io.write.write_layers`, so
a reader never sees a partial file; every target is checked before the first
is written.
"""

from __future__ import annotations

import json
import logging
import os
import re
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import geopandas as gpd
import pandas as pd

from thrustmap.errors import CRSError, InputError, OutputExistsError
from thrustmap.io.atomic import write_file
from thrustmap.io.write import write_layers

__all__ = [
    "check_layers",
    "describe_layers",
    "write_geojson_layers",
    "write_shapefile_layers",
    "shapefile_field_names",
]

logger = logging.getLogger(__name__)

_LAYER_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")


def check_layers(layers: Mapping[str, pd.DataFrame], *, source: str) -> None:
    """Check layer names (GeoPackage table names) and that every geometry layer has a CRS.

    Raises
    ------
    InputError
        For a bad layer name or a value that is not a (Geo)DataFrame.
    CRSError
        For a geometry layer without CRS.

    Examples
    --------
    >>> check_layers({"bad name": pd.DataFrame()}, source="run.gpkg")
    Traceback (most recent call last):
    ...
    thrustmap.errors.InputError: file run.gpkg, layer bad name: a layer name must start with a letter or '_' and hold only letters, digits and '_'; got 'bad name'
    """
    for name, frame in layers.items():
        if not isinstance(name, str) or not _LAYER_NAME.match(name):
            raise InputError(
                "a layer name must start with a letter or '_' and hold only letters, digits "
                f"and '_'; got {name!r}",
                source=source,
                layer=str(name),
            )
        if not isinstance(frame, pd.DataFrame):
            raise InputError(
                f"expected a (Geo)DataFrame, got {type(frame).__name__}", source=source, layer=name
            )
        if _has_geometry(frame) and frame.crs is None:
            raise CRSError(
                "the layer has no CRS; set one with GeoDataFrame.set_crs() before writing",
                source=source,
                layer=name,
            )


def _has_geometry(frame: pd.DataFrame) -> bool:
    return isinstance(frame, gpd.GeoDataFrame) and frame._geometry_column_name in frame.columns


def describe_layers(layers: Mapping[str, pd.DataFrame]) -> dict[str, dict[str, Any]]:
    """Row count, geometry type(s) and CRS of each layer (for sidecars and logs).

    Examples
    --------
    >>> import pandas as pd
    >>> describe_layers({"t": pd.DataFrame({"a": [1, 2]})})
    {'t': {'rows': 2, 'geometry_types': [], 'crs': None}}
    """
    out = {}
    for name, frame in layers.items():
        if _has_geometry(frame):
            types = sorted(set(frame.geometry.geom_type.dropna()))
            crs = frame.crs.to_string() if frame.crs is not None else None
        else:
            types, crs = [], None
        out[name] = {"rows": len(frame), "geometry_types": types, "crs": crs}
    return out


def _export_targets(
    folder: str | os.PathLike[str], layers: Mapping[str, pd.DataFrame], suffix: str,
    overwrite: bool,
) -> tuple[Path, dict[str, gpd.GeoDataFrame], dict[str, Path]]:
    """Geometry layers to export and their target files, all checked before anything is written."""
    base = Path(folder)
    spatial = {k: v for k, v in layers.items() if _has_geometry(v)}
    tables = sorted(set(layers) - set(spatial))
    if tables:
        logger.info("%s export holds geometry layers only; tables kept in the GeoPackage: %s",
                    suffix, tables)
    check_layers(spatial, source=os.fspath(base))
    targets = {name: base / f"{name}{suffix}" for name in spatial}
    existing = [str(t) for t in targets.values() if t.exists()]
    if existing and not overwrite:
        raise OutputExistsError(
            f"output exists: {', '.join(existing)}; pass overwrite=True (--overwrite) to replace it")
    return base, spatial, targets


def write_geojson_layers(
    folder: str | os.PathLike[str],
    layers: Mapping[str, pd.DataFrame],
    *,
    overwrite: bool = False,
) -> dict[str, Path]:
    """Write each geometry layer as an RFC 7946 GeoJSON file ``<layer>.geojson``.

    RFC 7946 (Butler et al. 2016, "The GeoJSON Format") fixes the CRS to WGS 84
    with longitude before latitude and no ``crs`` member; layers are reprojected
    to EPSG:4326 and written with GDAL's ``RFC7946=YES`` option. Attribute
    tables (no geometry) are left to the GeoPackage.

    Parameters
    ----------
    folder : str or path-like
        Output folder, created when missing.
    layers : mapping of str to (Geo)DataFrame
        Layers; those without geometry are not written.
    overwrite : bool, default False
        Replace existing files.

    Returns
    -------
    dict of str to Path
        Layer name to written file.

    Raises
    ------
    OutputExistsError
        When a target exists and ``overwrite`` is false (checked before writing any).
    CRSError
        For a geometry layer without CRS.

    Examples
    --------
    >>> import tempfile, geopandas as gpd, shapely
    >>> g = gpd.GeoDataFrame(geometry=[shapely.Point(700000, 5090000)], crs="EPSG:32633")
    >>> out = write_geojson_layers(tempfile.mkdtemp(), {"pts": g})
    >>> out["pts"].suffix
    '.geojson'
    """
    _, spatial, targets = _export_targets(folder, layers, ".geojson", overwrite)
    for name, frame in spatial.items():
        write_layers(targets[name], {name: frame.to_crs("EPSG:4326")}, overwrite=True,
                     layer_options={"RFC7946": "YES"})
    return targets


def shapefile_field_names(columns: list[str]) -> dict[str, str]:
    """Unique dBASE field names (at most 10 characters) for column names.

    Names that fit are kept; longer ones are cut to 10 characters, and a
    clash is resolved by replacing the tail with a running number.

    Parameters
    ----------
    columns : list of str
        Column names (geometry excluded).

    Returns
    -------
    dict of str to str
        Original name to field name.

    Examples
    --------
    >>> shapefile_field_names(["dip_direction", "dip_direction_grid", "dip"])
    {'dip_direction': 'dip_direct', 'dip_direction_grid': 'dip_dire_1', 'dip': 'dip'}
    """
    taken: set[str] = set()
    mapping = {}
    for col in columns:
        short = col[:10]
        n = 0
        while short.lower() in taken:
            n += 1
            tail = f"_{n}"
            short = col[: 10 - len(tail)] + tail
        taken.add(short.lower())
        mapping[col] = short
    return mapping


def write_shapefile_layers(
    folder: str | os.PathLike[str],
    layers: Mapping[str, pd.DataFrame],
    *,
    overwrite: bool = False,
) -> dict[str, Path]:
    """Write each geometry layer as a Shapefile ``<layer>.shp`` (with .shx, .dbf, .prj, .cpg).

    Field names longer than the dBASE limit of 10 characters are shortened by
    :func:`shapefile_field_names`; the mapping of every layer is written to
    ``fieldnames.json`` in the folder.

    Parameters
    ----------
    folder : str or path-like
        Output folder, created when missing.
    layers : mapping of str to (Geo)DataFrame
        Layers; those without geometry are not written.
    overwrite : bool, default False
        Replace existing files.

    Returns
    -------
    dict of str to Path
        Layer name to the written ``.shp`` file.

    Raises
    ------
    OutputExistsError
        When a target exists and ``overwrite`` is false (checked before writing any).
    CRSError
        For a geometry layer without CRS.

    Examples
    --------
    >>> import tempfile, geopandas as gpd, shapely
    >>> g = gpd.GeoDataFrame({"dip_direction": [90.0]}, geometry=[shapely.Point(7e5, 5.09e6)],
    ...                      crs="EPSG:32633")
    >>> out = write_shapefile_layers(tempfile.mkdtemp(), {"pts": g})
    >>> list(gpd.read_file(out["pts"]).columns)
    ['dip_direct', 'geometry']
    """
    base, spatial, targets = _export_targets(folder, layers, ".shp", overwrite)
    names: dict[str, dict[str, str]] = {}
    for name, frame in spatial.items():
        geom = frame._geometry_column_name
        mapping = shapefile_field_names([c for c in frame.columns if c != geom])
        names[name] = {v: k for k, v in mapping.items() if k != v}
        write_layers(targets[name], {name: frame.rename(columns=mapping)}, overwrite=True)
    index = base / "fieldnames.json"
    known = json.loads(index.read_text(encoding="utf-8")) if index.exists() else {}
    known.update(names)
    write_file(index, json.dumps(known, indent=2) + "\n", overwrite=True)
    return targets
