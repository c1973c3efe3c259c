"""Atomic writers for GeoPackage, GeoJSON and Shapefile outputs.

Everything is written into a temporary folder beside the target and moved into
place with :func:`os.replace`, so a reader never sees a half-written file and a
failure leaves any earlier file as it was.
"""

from __future__ import annotations

import logging
import os
import shutil
import tempfile
from collections.abc import Mapping
from pathlib import Path

import geopandas as gpd
import pandas as pd

from thrustmap.errors import OutputExistsError, ParameterError
from thrustmap.io.sources import ENGINES

__all__ = ["write_layers", "DRIVERS"]

log = logging.getLogger(__name__)

DRIVERS = {".gpkg": "GPKG", ".geojson": "GeoJSON", ".json": "GeoJSON", ".shp": "ESRI Shapefile"}

# Files making up one shapefile; an old spatial index must not outlive its data.
_SHAPEFILE_PARTS = (".shp", ".shx", ".dbf", ".prj", ".cpg", ".qix", ".sbn", ".sbx")


def write_layers(
    path: str | os.PathLike,
    layers: Mapping[str, pd.DataFrame],
    *,
    overwrite: bool = False,
    engine: str | None = None,
) -> Path:
    """Write named layers to one file, atomically.

    Parameters
    ----------
    path : path-like
        Output file; the driver follows the extension: ``.gpkg`` (GeoPackage,
        any number of layers), ``.geojson``/``.json`` (GeoJSON) or ``.shp``
        (Shapefile), the last two with exactly one layer. Missing folders are created.
    layers : mapping of str to (Geo)DataFrame
        Layer name to data. A plain DataFrame (or a GeoDataFrame without an active
        geometry) is written as an attribute-only table.
    overwrite : bool, default False
        Replace an existing file. For an existing GeoPackage only the named layers
        are replaced; its other layers are kept. Keyword only.
    engine : {"pyogrio", "fiona"}, optional
        I/O engine; default geopandas' default. Keyword only.

    Returns
    -------
    pathlib.Path
        The written file.

    Raises
    ------
    OutputExistsError
        When ``path`` exists and ``overwrite`` is False.
    ParameterError
        For an unknown extension or engine, no layers, or several layers for a
        single-layer format.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> import geopandas as gpd, pandas as pd
    >>> pts = gpd.GeoDataFrame({"id": [1]}, geometry=gpd.points_from_xy([0.0], [0.0]), crs=32633)
    >>> out = pathlib.Path(tempfile.mkdtemp()) / "run.gpkg"
    >>> write_layers(out, {"points": pts, "counts": pd.DataFrame({"n": [1]})}).name
    'run.gpkg'
    """
    path = Path(path)
    driver = DRIVERS.get(path.suffix.lower())
    if driver is None:
        raise ParameterError(
            f"cannot write {path}: unknown extension {path.suffix!r}; use one of "
            + ", ".join(sorted(DRIVERS))
        )
    if not layers:
        raise ParameterError(f"cannot write {path}: no layers given")
    if driver != "GPKG" and len(layers) != 1:
        raise ParameterError(
            f"cannot write {path}: {driver} holds one layer, got {len(layers)} "
            f"({', '.join(layers)}); use a .gpkg file for several layers"
        )
    engine = _engine(engine)
    parts = _parts(path, driver)
    exists = any(p.exists() for p in parts)
    if exists and not overwrite:
        raise OutputExistsError(f"{path} exists; pass overwrite=True to replace it")
    path.parent.mkdir(parents=True, exist_ok=True)
    staging = Path(tempfile.mkdtemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent))
    try:
        target = staging / path.name
        if driver == "GPKG" and exists:
            shutil.copy2(path, target)
        for name, frame in layers.items():
            _write_one(target, name, frame, driver=driver, engine=engine)
        written = {p.suffix.lower(): p for p in staging.iterdir()}
        for old in parts:
            if old.suffix.lower() not in written and old.exists():
                old.unlink()
        for suffix, new in written.items():
            os.replace(new, path.with_suffix(suffix) if driver == "ESRI Shapefile" else path)
    finally:
        shutil.rmtree(staging, ignore_errors=True)
    log.info("wrote %s (%s)", path, ", ".join(layers))
    return path


def _engine(engine: str | None) -> str:
    chosen = engine or gpd.options.io_engine or "pyogrio"
    if chosen not in ENGINES:
        raise ParameterError(f"engine={engine!r} is not valid; choose one of {', '.join(ENGINES)}")
    return chosen


def _parts(path: Path, driver: str) -> list[Path]:
    if driver == "ESRI Shapefile":
        return [path.with_suffix(s) for s in _SHAPEFILE_PARTS]
    return [path]


def _is_table(frame: pd.DataFrame) -> bool:
    if not isinstance(frame, gpd.GeoDataFrame):
        return True
    return frame.active_geometry_name is None or frame.active_geometry_name not in frame


def _write_one(path: Path, name: str, frame: pd.DataFrame, *, driver: str, engine: str) -> None:
    """Write one layer into ``path`` (created or extended)."""
    layer = {"layer": name} if driver == "GPKG" else {}
    if not _is_table(frame):
        frame.to_file(path, driver=driver, engine=engine, **layer)
    elif engine == "pyogrio":
        import pyogrio

        pyogrio.write_dataframe(pd.DataFrame(frame), path, driver=driver, **layer)
    else:
        _write_table_fiona(path, pd.DataFrame(frame), driver=driver, **layer)


def _write_table_fiona(path: Path, frame: pd.DataFrame, *, driver: str, **layer: str) -> None:
    import fiona
    from geopandas.io.file import infer_schema

    carrier = gpd.GeoDataFrame(
        frame, geometry=gpd.GeoSeries([None] * len(frame), index=frame.index)
    )
    schema = infer_schema(carrier)
    schema["geometry"] = "None"
    features = (
        {"geometry": None, "properties": f["properties"]} for f in carrier.iterfeatures(na="null")
    )
    with fiona.open(path, "w", driver=driver, schema=schema, **layer) as dst:
        dst.writerecords(features)
