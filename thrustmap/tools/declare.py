"""Tool declarations: one declaration drives the Python API, the CLI, pipelines and GIS hosts.

A tool names its inputs (layers or tables), its parameters (type, default, unit,
range or choices, help) and its outputs (layer names), and points at a plain
function that takes the inputs as (Geo)DataFrames plus the parameters as
keywords and returns a mapping of output name to (Geo)DataFrame.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

from thrustmap.errors import ParameterError

__all__ = ["Param", "LayerInput", "LayerOutput", "Tool", "GEOMETRIES", "PARAM_TYPES"]

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
        return {"name": self.name, "geometry": self.geometry, "help": self.help}


@dataclass(frozen=True)
class Tool:
    """A declared tool: what it reads, its parameters, what it writes, and the function.

    ``func(**inputs, **params)`` receives each input as a (Geo)DataFrame (or
    ``None`` for an optional input not given) and each parameter validated, and
    returns a mapping from every declared output name to a (Geo)DataFrame.
    """

    name: str
    summary: str
    func: Callable[..., Mapping[str, Any]]
    inputs: tuple[LayerInput, ...] = ()
    params: tuple[Param, ...] = ()
    outputs: tuple[LayerOutput, ...] = ()
    group: str = "analysis"
    origin: str = field(default="thrustmap", compare=False)

    def param(self, name: str) -> Param:
        """The declared parameter called ``name``."""
        for p in self.params:
            if p.name == name:
                return p
        raise ParameterError(
            f"{self.name}: unknown parameter {name!r}; parameters are: "
            + ", ".join(p.name for p in self.params)
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
        }
