"""Tool declarations: one declaration drives the Python API, the CLI, pipelines and GIS hosts.

A tool names its inputs (layers or tables), its parameters (type, default, unit,
range or choices, help) and its outputs (layer names), and points at a plain
function that takes the inputs as (Geo)DataFrames plus the parameters as
keywords and returns a mapping of output name to (Geo)DataFrame.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from thrustmap.errors import InputError, ParameterError

__all__ = [
    "Param",
    "LayerInput",
    "LayerOutput",
    "FileOutput",
    "Example",
    "Tool",
    "GEOMETRIES",
    "PARAM_TYPES",
]

GEOMETRIES = ("point", "line", "polygon", "table", "any")
PARAM_TYPES = ("float", "int", "bool", "str", "choice")


@dataclass(frozen=True)
class Param:
    """A typed tool parameter.

    Parameters
    ----------
    name : str
        Python keyword of the parameter (``snake_case``); the CLI option is
        ``--name-with-dashes``.
    type : {"float", "int", "bool", "str", "choice"}
        Value type.
    default : object
        Default value; ``None`` means optional with no value.
    help : str
        One sentence for dialogs and ``--help``.
    unit : str, optional
        Unit of the value (``"degrees"``, ``"metres"``), shown in help.
    minimum, maximum : float, optional
        Inclusive range for numbers.
    choices : tuple of str, optional
        Allowed values when ``type == "choice"``.
    """

    name: str
    type: str
    default: Any = None
    help: str = ""
    unit: str | None = None
    minimum: float | None = None
    maximum: float | None = None
    choices: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        if self.type not in PARAM_TYPES:
            raise ValueError(f"parameter {self.name}: type {self.type!r} not in {PARAM_TYPES}")
        if self.type == "choice" and not self.choices:
            raise ValueError(f"parameter {self.name}: a choice parameter needs choices")

    def validate(self, value: Any, *, tool: str = "") -> Any:
        """Convert ``value`` to the declared type and check its range or choices.

        Raises
        ------
        ParameterError
            Naming the tool, the parameter, the value and what is accepted.
        """
        where = f"{tool}: " if tool else ""
        if value is None:
            return None
        try:
            if self.type == "float":
                v: Any = float(value)
            elif self.type == "int":
                if isinstance(value, float) and not value.is_integer():
                    raise ValueError
                v = int(value)
            elif self.type == "bool":
                v = _to_bool(value)
            else:
                v = str(value)
        except (TypeError, ValueError):
            raise ParameterError(
                f"{where}parameter {self.name!r} must be of type {self.type}; got {value!r}"
            ) from None
        if self.type == "choice" and v not in self.choices:
            raise ParameterError(
                f"{where}parameter {self.name!r} = {v!r} is not one of: {', '.join(self.choices)}"
            )
        if self.type in ("float", "int"):
            unit = f" {self.unit}" if self.unit else ""
            if self.minimum is not None and v < self.minimum:
                raise ParameterError(
                    f"{where}parameter {self.name!r} = {v}{unit} is below the minimum {self.minimum}{unit}"
                )
            if self.maximum is not None and v > self.maximum:
                raise ParameterError(
                    f"{where}parameter {self.name!r} = {v}{unit} is above the maximum {self.maximum}{unit}"
                )
        return v

    def describe(self) -> dict[str, Any]:
        """JSON-ready description of the parameter."""
        return {
            "name": self.name,
            "type": self.type,
            "default": self.default,
            "help": self.help,
            "unit": self.unit,
            "minimum": self.minimum,
            "maximum": self.maximum,
            "choices": list(self.choices),
        }


def _to_bool(value: Any) -> bool:
    if isinstance(value, bool):
        return value
    text = str(value).strip().lower()
    if text in ("1", "true", "yes", "on"):
        return True
    if text in ("0", "false", "no", "off"):
        return False
    raise ValueError(value)


@dataclass(frozen=True)
class LayerInput:
    """A layer or table the tool reads.

    ``geometry`` is one of ``point``, ``line``, ``polygon``, ``table`` (no
    geometry) or ``any``.
    """

    name: str
    geometry: str
    help: str = ""
    optional: bool = False

    def __post_init__(self) -> None:
        if self.geometry not in GEOMETRIES:
            raise ValueError(f"input {self.name}: geometry {self.geometry!r} not in {GEOMETRIES}")

    def describe(self) -> dict[str, Any]:
        """JSON-ready description of the input."""
        return {"name": self.name, "geometry": self.geometry, "help": self.help, "optional": self.optional}

    def check(self, frame: Any, *, source: str | None = None, layer: str | None = None) -> None:
        """Check that ``frame`` has the declared geometry type.

        A ``table`` or ``any`` input accepts every frame; ``point``, ``line`` and
        ``polygon`` inputs need a GeoDataFrame whose non-empty geometries are all
        of that family (multi-part geometries included).

        Raises
        ------
        InputError
            Naming the file, layer and first row with the wrong geometry.

        Examples
        --------
        >>> import geopandas as gpd, shapely
        >>> pts = gpd.GeoDataFrame(geometry=[shapely.Point(0, 0)])
        >>> LayerInput("stations", "point").check(pts)
        >>> LayerInput("traces", "line").check(pts, source="a.gpkg", layer="s")
        Traceback (most recent call last):
        ...
        thrustmap.errors.InputError: file a.gpkg, layer s, row 1: input 'traces' expects line geometries; found Point
        """
        allowed = _GEOMETRY_FAMILIES.get(self.geometry)
        if allowed is None:
            return
        if getattr(frame, "active_geometry_name", None) is None:
            raise InputError(
                f"input {self.name!r} expects a {self.geometry} layer; found a table without geometry",
                source=source,
                layer=layer,
            )
        types = frame.geometry.geom_type
        bad = types.notna() & ~types.isin(allowed)
        if bad.any():
            position = int(bad.to_numpy().argmax())
            raise InputError(
                f"input {self.name!r} expects {self.geometry} geometries; found {types.iloc[position]}",
                source=source,
                layer=layer,
                row=position + 1,
            )


_GEOMETRY_FAMILIES = {
    "point": ("Point", "MultiPoint"),
    "line": ("LineString", "MultiLineString", "LinearRing"),
    "polygon": ("Polygon", "MultiPolygon"),
}


@dataclass(frozen=True)
class LayerOutput:
    """A layer or table the tool writes, by layer name."""

    name: str
    geometry: str
    help: str = ""

    def __post_init__(self) -> None:
        if self.geometry not in GEOMETRIES:
            raise ValueError(f"output {self.name}: geometry {self.geometry!r} not in {GEOMETRIES}")

    def describe(self) -> dict[str, Any]:
        """JSON-ready description of the output."""
        return {"name": self.name, "kind": "layer", "geometry": self.geometry, "help": self.help}


@dataclass(frozen=True)
class FileOutput:
    """A file the tool writes besides its layers (figure, web page, report).

    The tool returns, under ``name``, the content: ``str`` (written as UTF-8),
    ``bytes``, or a callable that writes the file at the path it is given.
    ``filename`` is relative to the output folder of the run; one ending in
    ``/`` names a folder, and the tool then returns a mapping of file names
    (relative to that folder) to contents, for outputs whose number of files
    depends on the data (one figure per domain).
    """

    name: str
    filename: str
    help: str = ""

    def __post_init__(self) -> None:
        if Path(self.filename).is_absolute() or ".." in Path(self.filename).parts:
            raise ValueError(f"output {self.name}: filename {self.filename!r} must stay inside the output folder")

    @property
    def is_folder(self) -> bool:
        """Whether the output is a folder of files (``filename`` ends with ``/``)."""
        return self.filename.endswith("/")

    def describe(self) -> dict[str, Any]:
        """JSON-ready description of the output."""
        return {
            "name": self.name,
            "kind": "folder" if self.is_folder else "file",
            "filename": self.filename,
            "help": self.help,
        }


@dataclass(frozen=True)
class Example:
    """A worked invocation of a tool: runnable in the tests, shown in ``--help``.

    Parameters
    ----------
    build : callable
        ``build(folder)`` writes or makes the example inputs and returns a mapping
        from input name to either a source (``"path"`` or ``"path:layer"``) or a
        (Geo)DataFrame (written to a GeoPackage in ``folder`` before use).
    params : mapping
        Parameter values of the example, by parameter name.
    summary : str
        One sentence saying what the example shows.
    """

    build: Callable[[Path], Mapping[str, Any]]
    params: Mapping[str, Any] = field(default_factory=dict)
    summary: str = ""


@dataclass(frozen=True)
class Tool:
    """A declared tool: what it reads, its parameters, what it writes, and the function.

    ``func(**inputs, **params)`` receives each input as a (Geo)DataFrame (or
    ``None`` for an optional input not given) and each parameter validated, and
    returns a mapping from every declared output name to a (Geo)DataFrame (for a
    :class:`LayerOutput`) or to file content (for a :class:`FileOutput`).
    ``example`` is the worked invocation every registered tool carries.
    """

    name: str
    summary: str
    func: Callable[..., Mapping[str, Any]]
    inputs: tuple[LayerInput, ...] = ()
    params: tuple[Param, ...] = ()
    outputs: tuple[LayerOutput | FileOutput, ...] = ()
    group: str = "analysis"
    origin: str = field(default="thrustmap", compare=False)
    example: Example | None = field(default=None, compare=False)

    def input(self, name: str) -> LayerInput:
        """The declared input called ``name``.

        Raises
        ------
        ParameterError
            When the tool has no such input; the message lists the inputs.
        """
        return self._named(self.inputs, name, "input")

    def param(self, name: str) -> Param:
        """The declared parameter called ``name``."""
        return self._named(self.params, name, "parameter")

    def _named(self, items: tuple[Any, ...], name: str, kind: str) -> Any:
        for item in items:
            if item.name == name:
                return item
        raise ParameterError(
            f"{self.name}: unknown {kind} {name!r}; {kind}s are: " + ", ".join(i.name for i in items)
        )

    def validate_params(self, values: Mapping[str, Any]) -> dict[str, Any]:
        """Defaults filled in and every value validated; unknown names are errors."""
        for key in values:
            self.param(key)
        return {
            p.name: p.validate(values.get(p.name, p.default), tool=self.name) for p in self.params
        }

    def run(self, inputs: Mapping[str, Any], params: Mapping[str, Any] | None = None) -> dict[str, Any]:
        """Validate the parameters, check the inputs and call the function.

        Raises
        ------
        ParameterError
            For an unknown, missing or invalid input or parameter.
        """
        names = {i.name for i in self.inputs}
        for key in inputs:
            if key not in names:
                raise ParameterError(
                    f"{self.name}: unknown input {key!r}; inputs are: {', '.join(sorted(names))}"
                )
        for i in self.inputs:
            if not i.optional and inputs.get(i.name) is None:
                raise ParameterError(f"{self.name}: required input {i.name!r} is missing")
        kwargs = {i.name: inputs.get(i.name) for i in self.inputs}
        kwargs.update(self.validate_params(params or {}))
        result = dict(self.func(**kwargs))
        missing = [o.name for o in self.outputs if o.name not in result]
        if missing:
            raise ParameterError(f"{self.name}: the tool returned no {', '.join(missing)}")
        return result

    def describe(self) -> dict[str, Any]:
        """JSON-ready description (what a GIS host needs to build its dialog)."""
        return {
            "name": self.name,
            "summary": self.summary,
            "group": self.group,
            "origin": self.origin,
            "inputs": [i.describe() for i in self.inputs],
            "params": [p.describe() for p in self.params],
            "outputs": [o.describe() for o in self.outputs],
            "example": None
            if self.example is None
            else {"summary": self.example.summary, "params": dict(self.example.params)},
        }
