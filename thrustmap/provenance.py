"""Provenance of a run: what produced a set of outputs, from which inputs, when.

A :class:`Provenance` record holds the thrustmap version, every tool that ran
with its parameters, the input files with their SHA-256 digests, and the UTC
time. :func:`write_run` stores a whole run's layers and that record in one
GeoPackage (an attribute table ``provenance``) and beside it as a sidecar JSON
file, all written atomically.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import logging
import os
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from thrustmap._version import __version__
from thrustmap.errors import InputError

__all__ = [
    "PROVENANCE_LAYER",
    "ToolRecord",
    "InputRecord",
    "Provenance",
    "file_sha256",
    "make_provenance",
    "sidecar_path",
    "read_provenance",
    "write_run",
]

logger = logging.getLogger(__name__)

PROVENANCE_LAYER = "provenance"
_TABLE_COLUMNS = ["section", "name", "key", "value"]


def _jsonable(value: Any) -> Any:
    """Parameter values as plain JSON types (numpy scalars, paths, tuples, sets)."""
    if isinstance(value, Mapping):
        return {str(k): _jsonable(v) for k, v in value.items()}
    if isinstance(value, list | tuple | set | frozenset | np.ndarray):
        return [_jsonable(v) for v in value]
    if isinstance(value, np.generic):
        return value.item()
    if value is None or isinstance(value, bool | int | float | str):
        return value
    return os.fspath(value) if isinstance(value, os.PathLike) else str(value)


@dataclass(frozen=True)
class ToolRecord:
    """One tool run: its name and its parameters (JSON-ready values)."""

    name: str
    params: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class InputRecord:
    """One input file: its name (no folder), the path as given, its size and SHA-256."""

    name: str
    path: str
    sha256: str
    bytes: int


@dataclass(frozen=True)
class Provenance:
    """What produced a run's outputs.

    Attributes
    ----------
    thrustmap_version : str
        Version of thrustmap that ran.
    created_utc : str
        ISO 8601 UTC time, e.g. ``2024-05-01T12:00:00Z``.
    tools : tuple of ToolRecord
        Tools in the order they ran, with their parameters.
    inputs : tuple of InputRecord
        Input files with their SHA-256 digests.
    """

    thrustmap_version: str
    created_utc: str
    tools: tuple[ToolRecord, ...] = ()
    inputs: tuple[InputRecord, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (the sidecar file's ``provenance`` member)."""
        return {
            "thrustmap_version": self.thrustmap_version,
            "created_utc": self.created_utc,
            "tools": [{"name": t.name, "params": t.params} for t in self.tools],
            "inputs": [
                {"name": i.name, "path": i.path, "sha256": i.sha256, "bytes": i.bytes}
                for i in self.inputs
            ],
        }

    @classmethod
    def from_dict(cls, data: Mapping[str, Any]) -> Provenance:
        """Rebuild a record from :meth:`to_dict` output."""
        return cls(
            thrustmap_version=str(data["thrustmap_version"]),
            created_utc=str(data["created_utc"]),
            tools=tuple(ToolRecord(t["name"], dict(t.get("params", {}))) for t in data["tools"]),
            inputs=tuple(
                InputRecord(i["name"], i["path"], i["sha256"], int(i["bytes"]))
                for i in data["inputs"]
            ),
        )

    def to_table(self) -> pd.DataFrame:
        """The record as a long attribute table (``section``, ``name``, ``key``, ``value``).

        One row per fact, readable in any GIS attribute view: section ``run``
        (version, time), ``tool`` (one row per parameter, the value as JSON;
        a tool without parameters gets one row with an empty key) and
        ``input`` (``path``, ``sha256``, ``bytes``).
        """
        rows = [
            ("run", "thrustmap", "version", self.thrustmap_version),
            ("run", "thrustmap", "created_utc", self.created_utc),
        ]
        for i, tool in enumerate(self.tools):
            name = f"{i + 1}:{tool.name}"
            if not tool.params:
                rows.append(("tool", name, "", ""))
            rows.extend(("tool", name, k, json.dumps(v)) for k, v in tool.params.items())
        for rec in self.inputs:
            rows += [
                ("input", rec.name, "path", rec.path),
                ("input", rec.name, "sha256", rec.sha256),
                ("input", rec.name, "bytes", str(rec.bytes)),
            ]
        return pd.DataFrame(rows, columns=_TABLE_COLUMNS, dtype=object)

    @classmethod
    def from_table(cls, table: pd.DataFrame) -> Provenance:
        """Rebuild a record from :meth:`to_table` output (as read back from a GeoPackage)."""
        run = {r.key: r.value for r in table.itertuples() if r.section == "run"}
        tools: dict[str, dict[str, Any]] = {}
        inputs: dict[str, dict[str, str]] = {}
        for r in table.itertuples():
            if r.section == "tool":
                params = tools.setdefault(r.name, {})
                if r.key:
                    params[r.key] = json.loads(r.value)
            elif r.section == "input":
                inputs.setdefault(r.name, {})[r.key] = r.value
        return cls(
            thrustmap_version=run["version"],
            created_utc=run["created_utc"],
            tools=tuple(ToolRecord(k.split(":", 1)[1], v) for k, v in tools.items()),
            inputs=tuple(
                InputRecord(k, v["path"], v["sha256"], int(v["bytes"])) for k, v in inputs.items()
            ),
        )


def file_sha256(path: str | os.PathLike[str]) -> str:
    """SHA-256 hex digest of a file's bytes.

    Parameters
    ----------
    path : str or path-like
        File to hash.

    Returns
    -------
    str
        64 lowercase hexadecimal digits.

    Raises
    ------
    InputError
        When the file cannot be read.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "empty.txt"
    >>> _ = p.write_bytes(b"")
    >>> file_sha256(p)[:16]
    'e3b0c44298fc1c14'
    """
    digest = hashlib.sha256()
    try:
        with open(path, "rb") as fh:
            for block in iter(lambda: fh.read(1 << 20), b""):
                digest.update(block)
    except OSError as exc:
        raise InputError(f"cannot read the input file to hash it: {exc}", source=os.fspath(path)) from exc
    return digest.hexdigest()


def make_provenance(
    *,
    inputs: Iterable[str | os.PathLike[str]] = (),
    tools: Iterable[tuple[str, Mapping[str, Any]]] = (),
    created_utc: _dt.datetime | None = None,
) -> Provenance:
    """Build a provenance record, hashing every input file.

    Parameters
    ----------
    inputs : iterable of path-like
        Input files; each is read and hashed with SHA-256.
    tools : iterable of (name, params)
        Tools in the order they ran and their parameters (values made JSON-ready:
        numpy scalars become numbers, paths and other objects strings).
    created_utc : datetime, optional
        Time of the run; now when omitted. A naive datetime is taken as UTC.

    Returns
    -------
    Provenance

    Raises
    ------
    InputError
        When an input file cannot be read.

    Examples
    --------
    >>> p = make_provenance(tools=[("fold_fit", {"method": "girdle"})])
    >>> p.tools[0].params
    {'method': 'girdle'}
    >>> p.created_utc.endswith("Z")
    True
    """
    when = created_utc or _dt.datetime.now(_dt.UTC)
    if when.tzinfo is None:
        when = when.replace(tzinfo=_dt.UTC)
    stamp = when.astimezone(_dt.UTC).isoformat(timespec="seconds").replace("+00:00", "Z")
    records = []
    for path in inputs:
        p = Path(path)
        records.append(InputRecord(p.name, os.fspath(path), file_sha256(p), p.stat().st_size))
    return Provenance(
        thrustmap_version=__version__,
        created_utc=stamp,
        tools=tuple(ToolRecord(str(name), _jsonable(dict(params))) for name, params in tools),
        inputs=tuple(records),
    )


def sidecar_path(geopackage: str | os.PathLike[str]) -> Path:
    """The sidecar JSON beside a GeoPackage: ``run.gpkg`` -> ``run.provenance.json``.

    Examples
    --------
    >>> sidecar_path("out/thrustmap.gpkg").name
    'thrustmap.provenance.json'
    """
    return Path(geopackage).with_suffix(".provenance.json")


def read_provenance(geopackage: str | os.PathLike[str]) -> Provenance:
    """Read the provenance record stored in a GeoPackage written by :func:`write_run`.

    Parameters
    ----------
    geopackage : str or path-like
        The run's GeoPackage.

    Returns
    -------
    Provenance

    Raises
    ------
    InputError
        When the file has no ``provenance`` table.
    """
    import pyogrio

    path = os.fspath(geopackage)
    layers = set(pyogrio.list_layers(path)[:, 0]) if os.path.exists(path) else set()
    if PROVENANCE_LAYER not in layers:
        raise InputError(
            f"no {PROVENANCE_LAYER!r} table; it holds {sorted(layers)}; "
            "write the run with thrustmap.provenance.write_run",
            source=path,
        )
    table = pyogrio.read_dataframe(path, layer=PROVENANCE_LAYER, read_geometry=False)
    return Provenance.from_table(table.fillna(""))


def write_run(
    path: str | os.PathLike[str],
    layers: Mapping[str, pd.DataFrame | None],
    *,
    provenance: Provenance,
    overwrite: bool = False,
    geojson_dir: str | os.PathLike[str] | None = None,
    shapefile_dir: str | os.PathLike[str] | None = None,
) -> dict[str, Path]:
    """Write a run's layers and its provenance into one GeoPackage, atomically.

    The GeoPackage receives every layer given (``None`` values are layers the
    run did not produce and are skipped) and a ``provenance`` attribute table.
    A sidecar ``<name>.provenance.json`` repeats the record with a summary of
    each layer and the GeoPackage's SHA-256. The GeoPackage is built in a
    temporary file in the same folder and renamed over the target, so an
    interrupted run leaves any previous file intact.

    Parameters
    ----------
    path : str or path-like
        Target ``.gpkg`` file.
    layers : mapping of str to (Geo)DataFrame or None
        Layer name to data; GeoDataFrames need a CRS, DataFrames become tables.
    provenance : Provenance
        The run's record (see :func:`make_provenance`).
    overwrite : bool, default False
        Replace existing outputs.
    geojson_dir, shapefile_dir : path-like, optional
        Also write each geometry layer as RFC 7946 GeoJSON / as a Shapefile there.

    Returns
    -------
    dict of str to Path
        ``geopackage`` and ``sidecar``, plus ``geojson:<layer>`` and
        ``shapefile:<layer>`` entries for the optional exports.

    Raises
    ------
    OutputExistsError
        When an output exists and ``overwrite`` is false.
    InputError
        For a bad layer name, a reserved name or a layer without CRS.

    Examples
    --------
    >>> import tempfile, pathlib, geopandas as gpd, shapely
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> pts = gpd.GeoDataFrame({"station": ["S1"]}, geometry=[shapely.Point(700000, 5090000)],
    ...                        crs="EPSG:32633")
    >>> out = write_run(folder / "run.gpkg", {"attitudes": pts, "domains": None},
    ...                 provenance=make_provenance())
    >>> read_provenance(out["geopackage"]).thrustmap_version == make_provenance().thrustmap_version
    True
    """
    from thrustmap.io.atomic import write_file
    from thrustmap.io.exports import (
        check_layers,
        describe_layers,
        write_geojson_layers,
        write_shapefile_layers,
    )
    from thrustmap.io.write import write_layers

    if PROVENANCE_LAYER in layers:
        raise InputError(
            f"the layer name {PROVENANCE_LAYER!r} is reserved for the run's provenance table",
            layer=PROVENANCE_LAYER,
        )
    target = Path(path)
    sidecar = sidecar_path(target)
    record = provenance.to_dict()
    present = {k: v for k, v in layers.items() if v is not None}
    skipped = [k for k, v in layers.items() if v is None]
    if skipped:
        logger.info("layers not produced by this run, not written: %s", ", ".join(skipped))
    check_layers(present, source=os.fspath(target))
    write_layers(
        target, {**present, PROVENANCE_LAYER: provenance.to_table()}, overwrite=overwrite,
        driver="GPKG", engine="pyogrio", keep_layers=False,
    )
    digest = file_sha256(target)
    summary = {
        "provenance": record,
        "geopackage": {"name": target.name, "sha256": digest},
        "layers": describe_layers(present),
        "not_produced": skipped,
    }
    write_file(sidecar, json.dumps(summary, indent=2) + "\n", overwrite=True)
    written = {"geopackage": target, "sidecar": sidecar}
    if geojson_dir is not None:
        for name, p in write_geojson_layers(geojson_dir, present, overwrite=overwrite).items():
            written[f"geojson:{name}"] = p
    if shapefile_dir is not None:
        for name, p in write_shapefile_layers(shapefile_dir, present, overwrite=overwrite).items():
            written[f"shapefile:{name}"] = p
    return written
