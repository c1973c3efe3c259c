"""Writing layers to GeoPackage, GeoJSON and Shapefile outputs, atomically.

Files go through :func:`thrustmap.io.atomic.atomic_paths`, so a reader never
sees a half-written file and a failure leaves any earlier file as it was.
"""

from __future__ import annotations

import logging
import os
import shutil
from collections.abc import Mapping
from pathlib import Path

import geopandas as gpd
import pandas as pd

from thrustmap.errors import InputError, ParameterError
from thrustmap.io.atomic import atomic_paths
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
    driver: str | None = None,
    keep_layers: bool = True,
    layer_options: Mapping[str, str] | None = None,
) -> Path:
    """Write named layers to one file, atomically.

    Parameters
    ----------
    path : path-like
        Output file; the driver follows the extension unless given: ``.gpkg``
        (GeoPackage, any number of layers), ``.geojson``/``.json`` (GeoJSON) or
        ``.shp`` (Shapefile), the last two with exactly one layer. Missing folders
        are created.
    layers : mapping of str to (Geo)DataFrame
        Layer name to data. A plain DataFrame (or a GeoDataFrame without an active
        geometry) is written as an attribute-only table.
    overwrite : bool, default False
        Replace an existing file. For an existing GeoPackage only the named layers
        are replaced; its other layers are kept (see ``keep_layers``). Keyword only.
    engine : {"pyogrio", "fiona"}, optional
        I/O engine; default geopandas' default. Keyword only.
    driver : {"GPKG", "GeoJSON", "ESRI Shapefile"}, optional
        Write with this driver whatever the extension. Keyword only.
    keep_layers : bool, default True
        When overwriting a GeoPackage, keep its layers not in ``layers``; False
        writes a new file holding only ``layers``. Keyword only.
    layer_options : mapping of str to str, optional
        GDAL layer creation options of the driver for geometry layers, e.g.
        ``{"RFC7946": "YES"}`` for GeoJSON. Keyword only.

    Returns
    -------
    pathlib.Path
        The written file (for a Shapefile, its ``.shp`` part).

    Raises
    ------
    OutputExistsError
        When ``path`` (or a part of a Shapefile) exists and ``overwrite`` is False.
    ParameterError
        For an unknown extension, driver or engine, no layers, or several layers
        for a single-layer format.

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
    if driver is not None and driver not in DRIVERS.values():
        raise ParameterError(
            f"cannot write {path}: driver={driver!r} is not valid; use one of "
            + ", ".join(sorted(set(DRIVERS.values())))
        )
    driver = driver or DRIVERS.get(path.suffix.lower())
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
    with atomic_paths(*parts, overwrite=overwrite) as temps:
        target = temps[0]
        if driver == "GPKG" and keep_layers and path.exists():
            shutil.copy2(path, target)
        for name, frame in layers.items():
            _write_one(target, name, frame, driver=driver, engine=engine,
                       options=dict(layer_options or {}))
    log.debug("wrote %s (%s)", parts[0], ", ".join(layers))
    return parts[0]


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


def _write_one(
    path: Path, name: str, frame: pd.DataFrame, *, driver: str, engine: str, options: dict[str, str]
) -> None:
    """Write one layer into ``path`` (created or extended)."""
    for column, dtype in frame.dtypes.items():
        if getattr(dtype, "kind", "O") in ("m", "c"):  # durations, complex numbers
            raise InputError(
                f"a {driver} file cannot store a {dtype} column; convert it to numbers or text first",
                source=str(path.name), layer=name, field=str(column),
            )
    layer = {"layer": name} if driver == "GPKG" else {}
    if not _is_table(frame):
        frame.to_file(path, driver=driver, engine=engine, **layer, **options)
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
