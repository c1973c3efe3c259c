"""Running a declared tool on files: read its inputs, run it, sort and write its outputs.

The command line and the pipeline both go through these functions, so a tool
behaves the same whichever way it is started. Inputs are read by
:func:`thrustmap.io.sources.read_source` and checked against the declared
geometry; outputs are written atomically, layers into one GeoPackage by
:func:`thrustmap.io.write.write_layers` and files into the output folder by
:func:`thrustmap.io.atomic.write_file`; :func:`check_targets` (from
:mod:`thrustmap.io.atomic`) refuses to start over existing outputs.
"""

from __future__ import annotations

import logging
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import pandas as pd

from thrustmap.errors import ThrustmapError
from thrustmap.io.atomic import FileContent, check_targets, write_file
from thrustmap.io.sources import read_source
from thrustmap.io.write import write_layers
from thrustmap.tools.declare import FileOutput, LayerOutput, Tool

__all__ = [
    "load_inputs",
    "collect_outputs",
    "check_targets",
    "declared_targets",
    "write_outputs",
    "example_invocation",
]

log = logging.getLogger(__name__)


def load_inputs(
    tool: Tool,
    sources: Mapping[str, str | Path],
    *,
    layer: str | None = None,
    to_crs: Any = None,
) -> dict[str, pd.DataFrame]:
    """Read the files named for a tool's inputs and check their geometry.

    Parameters
    ----------
    tool : Tool
        The tool whose inputs are read.
    sources : mapping of str to str or path
        Input name to ``"path"`` or ``"path:layer"``.
    layer : str, optional
        Layer for sources that name none (the ``--layer`` option).
    to_crs : optional
        Working CRS the spatial inputs are reprojected to (the ``--crs`` option).

    Returns
    -------
    dict of str to DataFrame or GeoDataFrame

    Raises
    ------
    SourceNotFoundError, InputError, CRSError
        From :func:`~thrustmap.io.sources.read_source` or the geometry check.
    ParameterError
        When a source is given for an input the tool does not declare.

    Examples
    --------
    >>> from thrustmap.tools.registry import get_tool
    >>> import tempfile
    >>> csv = Path(tempfile.mkdtemp()) / "a.csv"
    >>> _ = csv.write_text("attitude\\n030/45\\n")
    >>> load_inputs(get_tool("convert-attitudes"), {"table": csv})["table"].shape
    (1, 1)
    """
    frames = {}
    for name, source in sources.items():
        declared = tool.input(name)
        frame = read_source(source, layer=layer, to_crs=to_crs)
        declared.check(frame, source=frame.attrs.get("source"), layer=frame.attrs.get("layer"))
        frames[name] = frame
    return frames


def collect_outputs(
    tool: Tool, results: Mapping[str, Any], *, names: Mapping[str, str] | None = None
) -> tuple[dict[str, pd.DataFrame], dict[str, FileContent]]:
    """Sort what a tool returned into layers and files, under their final names.

    Parameters
    ----------
    tool : Tool
        The tool that produced ``results``.
    results : mapping
        What :meth:`Tool.run` returned.
    names : mapping of str to str, optional
        Output name to the layer name or file path to use instead of the
        declared one (pipeline ``outputs`` tables).

    Returns
    -------
    layers : dict of str to DataFrame
        Layer name to frame.
    files : dict of str to content
        Path relative to the output folder to file content; a mapping returned
        for a file output is spread into the folder it names.

    Raises
    ------
    ThrustmapError
        When the tool returned the wrong kind of value for an output.
    """
    names = names or {}
    layers: dict[str, pd.DataFrame] = {}
    files: dict[str, FileContent] = {}
    for out in tool.outputs:
        value = results[out.name]
        target = names.get(out.name, out.name if isinstance(out, LayerOutput) else out.filename)
        if isinstance(out, LayerOutput):
            if not isinstance(value, pd.DataFrame):
                raise ThrustmapError(
                    f"{tool.name}: output {out.name!r} should be a DataFrame; got {type(value).__name__}"
                )
            layers[target] = value
        elif out.is_folder:
            if not isinstance(value, Mapping):
                raise ThrustmapError(
                    f"{tool.name}: folder output {out.name!r} should be a mapping of file names "
                    f"to contents; got {type(value).__name__}"
                )
            for relative, content in value.items():
                if Path(relative).is_absolute() or ".." in Path(relative).parts:
                    raise ThrustmapError(
                        f"{tool.name}: file {relative!r} of output {out.name!r} leaves its folder"
                    )
                files[(Path(target) / relative).as_posix()] = content
        else:
            files[target] = value
    return layers, files


def write_outputs(
    layers: Mapping[str, pd.DataFrame],
    files: Mapping[str, FileContent],
    *,
    geopackage: Path | None,
    folder: Path,
    overwrite: bool = False,
) -> list[Path]:
    """Write layers into one GeoPackage and files into a folder, each atomically.

    Every target is checked before anything is written, so a refusal leaves
    no partial output.

    Parameters
    ----------
    layers : mapping of str to DataFrame
        Layer name to frame; nothing is written to ``geopackage`` when empty.
    files : mapping of str to content
        Path relative to ``folder`` to text, bytes or a writer callable.
    geopackage : Path or None
        The GeoPackage for the layers.
    folder : Path
        Folder the file paths are relative to.
    overwrite : bool
        Replace existing outputs. Keyword only.

    Returns
    -------
    list of Path
        The files written, GeoPackage first.

    Raises
    ------
    OutputExistsError
        When an output exists and ``overwrite`` is false.
    """
    targets = [folder / relative for relative in files]
    if layers:
        if geopackage is None:
            raise ThrustmapError("layers to write but no GeoPackage named")
        targets.insert(0, geopackage)
    check_targets(targets, overwrite=overwrite)
    written = []
    if layers:
        written.append(_write_geopackage(geopackage, layers, overwrite=overwrite))
    for relative, content in files.items():
        written.append(write_file(folder / relative, content, overwrite=overwrite))
    return written


def example_invocation(tool: Tool, folder: Path) -> tuple[dict[str, str], dict[str, Any]]:
    """Make the inputs of a tool's example in ``folder``; return its sources and parameters.

    Frames returned by the example's ``build`` are written to
    ``folder/example_inputs.gpkg``, one layer per input.

    Raises
    ------
    ThrustmapError
        When the tool declares no example.

    Examples
    --------
    >>> import tempfile
    >>> from thrustmap.tools.registry import get_tool
    >>> sources, params = example_invocation(get_tool("convert-attitudes"), Path(tempfile.mkdtemp()))
    >>> sorted(sources), params["column"]
    (['table'], 'attitude')
    """
    if tool.example is None:
        raise ThrustmapError(
            f"tool {tool.name!r} ({tool.origin}) declares no example; give its Tool an "
            "example=Example(build, params) so that it is run in the tests"
        )
    folder.mkdir(parents=True, exist_ok=True)
    built = dict(tool.example.build(folder))
    frames = {k: v for k, v in built.items() if isinstance(v, pd.DataFrame)}
    sources = {k: str(v) for k, v in built.items() if not isinstance(v, pd.DataFrame)}
    if frames:
        path = folder / "example_inputs.gpkg"
        _write_geopackage(path, frames, overwrite=True)
        sources.update({k: f"{path}:{k}" for k in frames})
    return sources, dict(tool.example.params)


def declared_targets(tool: Tool, *, geopackage: Path | None, folder: Path) -> list[Path]:
    """Outputs a tool will write, known before it runs; files in folder outputs are known only after.

    Examples
    --------
    >>> from thrustmap.tools.registry import get_tool
    >>> declared_targets(get_tool("convert-attitudes"), geopackage=Path("o.gpkg"), folder=Path("."))
    [PosixPath('o.gpkg')]
    """
    targets = [
        folder / o.filename for o in tool.outputs if isinstance(o, FileOutput) and not o.is_folder
    ]
    if geopackage is not None and any(isinstance(o, LayerOutput) for o in tool.outputs):
        targets.insert(0, geopackage)
    return targets


def _write_geopackage(path: Path, layers: Mapping[str, pd.DataFrame], *, overwrite: bool) -> Path:
    """A run's GeoPackage: exactly ``layers``, whatever the file is named."""
    return write_layers(
        path, layers, overwrite=overwrite, driver="GPKG", engine="pyogrio", keep_layers=False
    )
