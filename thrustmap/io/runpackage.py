"""Atomic writers for a run's outputs: GeoPackage, GeoJSON (RFC 7946), Shapefile, text.

Every writer builds its output in a temporary file in the target's own folder
and renames it over the target with :func:`os.replace`, so a reader sees
either the previous file or the complete new one, never a partial file, even
when the writing process is killed half-way.
"""

from __future__ import annotations

import hashlib
import logging
import os
import re
import secrets
import shutil
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import geopandas as gpd
import pandas as pd
import pyogrio

from thrustmap.errors import CRSError, InputError, OutputExistsError

__all__ = [
    "write_text_atomic",
    "write_bytes_atomic",
    "write_package_layers",
    "write_geojson_layers",
    "write_shapefile_layers",
    "describe_layers",
    "shapefile_field_names",
]

logger = logging.getLogger(__name__)

_LAYER_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")
_SHAPEFILE_PARTS = (".shp", ".shx", ".dbf", ".prj", ".cpg")


def _temp_sibling(target: Path, suffix: str) -> Path:
    """A fresh, hidden file name in the target's folder (same filesystem, so rename is atomic)."""
    return target.with_name(f".{target.name}.{secrets.token_hex(6)}.tmp{suffix}")


def _check_target(target: Path, overwrite: bool) -> None:
    if target.exists() and not overwrite:
        raise OutputExistsError(f"{target} exists; pass overwrite=True (--overwrite) to replace it")
    if not target.parent.is_dir():
        target.parent.mkdir(parents=True, exist_ok=True)


def _fsync(path: Path) -> None:
    with open(path, "rb") as fh:
        os.fsync(fh.fileno())


def write_bytes_atomic(path: str | os.PathLike[str], data: bytes, *, overwrite: bool = False) -> Path:
    """Write bytes to ``path`` through a temporary sibling file and a rename.

    Parameters
    ----------
    path : str or path-like
        Target file; its folder is created when missing.
    data : bytes
        Content.
    overwrite : bool, default False
        Replace an existing file.

    Returns
    -------
    Path
        The target path.

    Raises
    ------
    OutputExistsError
        When the file exists and ``overwrite`` is false.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "a.bin"
    >>> write_bytes_atomic(p, b"abc").read_bytes()
    b'abc'
    """
    target = Path(path)
    _check_target(target, overwrite)
    tmp = _temp_sibling(target, target.suffix)
    try:
        with open(tmp, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, target)
    finally:
        tmp.unlink(missing_ok=True)
    return target


def write_text_atomic(path: str | os.PathLike[str], text: str, *, overwrite: bool = False) -> Path:
    """Write UTF-8 text to ``path`` atomically (see :func:`write_bytes_atomic`).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "a.txt"
    >>> write_text_atomic(p, "héllo").read_text(encoding="utf-8")
    'héllo'
    """
    return write_bytes_atomic(path, text.encode("utf-8"), overwrite=overwrite)


def _check_layers(layers: Mapping[str, pd.DataFrame], *, source: str) -> None:
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
        if isinstance(frame, gpd.GeoDataFrame) and _has_geometry(frame) and frame.crs is None:
            raise CRSError(
                "the layer has no CRS; set one with GeoDataFrame.set_crs() before writing",
                source=source,
                layer=name,
            )


def _has_geometry(frame: pd.DataFrame) -> bool:
    return isinstance(frame, gpd.GeoDataFrame) and frame._geometry_column_name in frame.columns


def _table(frame: pd.DataFrame) -> pd.DataFrame:
    """A geometry-less table as a plain DataFrame with a fresh index (pyogrio writes columns only)."""
    return pd.DataFrame(frame).reset_index(drop=True)


def write_package_layers(
    path: str | os.PathLike[str],
    layers: Mapping[str, pd.DataFrame],
    *,
    dataset_metadata: Mapping[str, str] | None = None,
    overwrite: bool = False,
) -> str:
    """Write several layers into one GeoPackage atomically.

    Layers are written one after another into a temporary GeoPackage in the
    target's folder, which is then renamed over the target. If anything fails
    (or the process dies) before the rename, the previous target is untouched.

    Parameters
    ----------
    path : str or path-like
        Target ``.gpkg`` file.
    layers : mapping of str to (Geo)DataFrame
        Layer name to data. GeoDataFrames are written with their CRS and
        geometry type; plain DataFrames become attribute tables.
    dataset_metadata : mapping of str to str, optional
        Key/value metadata stored in the GeoPackage metadata tables.
    overwrite : bool, default False
        Replace an existing file.

    Returns
    -------
    str
        SHA-256 of the written GeoPackage.

    Raises
    ------
    OutputExistsError
        When the file exists and ``overwrite`` is false.
    InputError
        For an empty mapping, a bad layer name or a non-DataFrame value.
    CRSError
        For a geometry layer without CRS.

    Examples
    --------
    >>> import tempfile, pathlib, pandas as pd
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "t.gpkg"
    >>> len(write_package_layers(p, {"notes": pd.DataFrame({"a": [1]})}))
    64
    """
    target = Path(path)
    source = os.fspath(target)
    if not layers:
        raise InputError("no layers to write", source=source)
    _check_layers(layers, source=source)
    _check_target(target, overwrite)
    tmp = _temp_sibling(target, ".gpkg")
    try:
        names = list(layers)
        for i, name in enumerate(names):
            frame = layers[name]
            meta = dict(dataset_metadata) if dataset_metadata and i == len(names) - 1 else None
            data = frame if _has_geometry(frame) else _table(frame)
            try:
                pyogrio.write_dataframe(
                    data, tmp, layer=name, driver="GPKG", dataset_metadata=meta
                )
            except (NotImplementedError, TypeError, ValueError) as exc:
                raise InputError(
                    f"the GeoPackage driver cannot store this layer: {exc}; "
                    "convert the offending column to text or numbers",
                    source=source,
                    layer=name,
                ) from exc
            logger.debug("wrote layer %s (%d rows) to %s", name, len(frame), tmp.name)
        _fsync(tmp)
        digest = hashlib.sha256(tmp.read_bytes()).hexdigest()
        os.replace(tmp, target)
    finally:
        for leftover in (tmp, Path(f"{tmp}-journal"), Path(f"{tmp}-wal"), Path(f"{tmp}-shm")):
            leftover.unlink(missing_ok=True)
    logger.info("wrote %d layers to %s", len(layers), target)
    return digest


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
    _check_layers(spatial, source=os.fspath(base))
    targets = {name: base / f"{name}{suffix}" for name in spatial}
    for target in targets.values():
        _check_target(target, overwrite)
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
        target = targets[name]
        tmp = _temp_sibling(target, ".geojson")
        try:
            pyogrio.write_dataframe(
                frame.to_crs("EPSG:4326"), tmp, driver="GeoJSON", layer=name, RFC7946="YES"
            )
            _fsync(tmp)
            os.replace(tmp, target)
        finally:
            tmp.unlink(missing_ok=True)
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
    ``fieldnames.json`` in the folder. Each layer is first written to a
    temporary folder beside the target, then its parts are renamed into place.

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
    import json

    base, spatial, targets = _export_targets(folder, layers, ".shp", overwrite)
    names: dict[str, dict[str, str]] = {}
    for name, frame in spatial.items():
        geom = frame._geometry_column_name
        mapping = shapefile_field_names([c for c in frame.columns if c != geom])
        names[name] = {v: k for k, v in mapping.items() if k != v}
        stage = _temp_sibling(base / name, "")
        stage.mkdir()
        try:
            pyogrio.write_dataframe(
                frame.rename(columns=mapping), stage / f"{name}.shp", driver="ESRI Shapefile"
            )
            for part in _SHAPEFILE_PARTS:
                staged = stage / f"{name}{part}"
                if staged.exists():
                    _fsync(staged)
                    os.replace(staged, base / f"{name}{part}")
        finally:
            shutil.rmtree(stage, ignore_errors=True)
    index = base / "fieldnames.json"
    known = json.loads(index.read_text(encoding="utf-8")) if index.exists() else {}
    known.update(names)
    write_text_atomic(index, json.dumps(known, indent=2) + "\n", overwrite=True)
    return targets
