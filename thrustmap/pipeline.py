"""TOML project files: the inputs, the domains and an ordered list of tool steps, run as one job.

A project file (paths are relative to it)::

    [project]
    name = "Synthetic demo"
    crs = "EPSG:32633"            # working CRS: spatial inputs are reprojected to it
    output = "../out"             # output folder (default "out" beside the file)
    geopackage = "thrustmap.gpkg" # the one GeoPackage of the run (this default)

    [inputs.field_sheet]          # one table per input; the name is used by the steps
    path = "field_sheet.csv"
    layer = "sheet1"              # layer or sheet, for multi-layer sources
    crs = "EPSG:4326"             # CRS of the coordinates when the file declares none
    azimuth_ref = "magnetic"      # north reference of the azimuths: true, grid, magnetic
    declination = 2.5             # degrees east, for magnetic azimuths ...
    date = 2024-06-01             # ... or the date, for the declination model

    [domains]
    input = "domains"             # the input holding the domain polygons
    field = "domain"              # their name column

    [[steps]]                     # run in order
    tool = "convert-attitudes"
    id = "planes"                 # optional; default the tool name (must be unique)
    inputs = { table = "field_sheet" }        # tool input = project input or "step.output"
    params = { column = "attitude" }
    outputs = { converted_attitudes = "field_planes" }  # optional: rename a layer or file

Each step's layer outputs become layers of ``<output>/<geopackage>`` under their
declared names (the canonical layer names of the data contract) unless renamed;
file outputs are written under the output folder. Everything is written at the
end, atomically, with a ``provenance`` table (one row per step). Parameters a
step does not set are filled from the project when the tool declares them:
``crs`` from ``[project] crs``; ``azimuth_ref``, ``declination`` and ``date``
from the project inputs wired into the step; ``domain_field`` from
``[domains] field``; and a tool input called ``domains`` left unwired reads
``[domains] input``. Unknown keys, tools, parameters, references and invalid
values are errors naming the key and its line in the file.
"""

from __future__ import annotations

import datetime as dt
import json
import logging
import os
import re
import time
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from importlib import metadata
from pathlib import Path
from typing import Any

import pandas as pd

from thrustmap._version import __version__
from thrustmap.errors import InputError, ParameterError, SourceNotFoundError, ToolLoadError
from thrustmap.io.atomic import write_file
from thrustmap.io.sources import parse_crs, read_source, working_crs
from thrustmap.provenance import PROVENANCE_LAYER, file_sha256, sidecar_path
from thrustmap.tools import registry, runner
from thrustmap.tools.declare import FileOutput, LayerOutput, Tool
from thrustmap.tools.options import AZIMUTH_REF, DECLINATION

__all__ = [
    "ProjectInput",
    "Step",
    "Project",
    "RunResult",
    "load_project",
    "run_project",
    "PROVENANCE_LAYER",
]

log = logging.getLogger(__name__)

_INPUT_METADATA = ("azimuth_ref", "declination", "date")
_KEYS = {
    "top": ("project", "inputs", "domains", "steps"),
    "project": ("name", "description", "crs", "output", "geopackage"),
    "input": ("path", "layer", "crs", "azimuth_ref", "declination", "date", "description"),
    "domains": ("input", "field"),
    "step": ("tool", "id", "description", "inputs", "params", "outputs"),
}
_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_-]*$")


@dataclass(frozen=True)
class ProjectInput:
    """One input of a project: a file (and layer) with its CRS and north reference."""

    name: str
    path: Path
    layer: str | None = None
    crs: str | None = None
    azimuth_ref: str | None = None
    declination: float | None = None
    date: str | None = None


@dataclass(frozen=True)
class Step:
    """One step: a tool, where its inputs come from, its parameters and output names.

    ``inputs`` maps each tool input to a project input name or to
    ``"step_id.output"``; ``params`` are validated and filled in;
    ``outputs`` maps each output name to its layer name or file path.
    """

    id: str
    tool: Tool
    inputs: dict[str, str]
    params: dict[str, Any]
    outputs: dict[str, str]


@dataclass(frozen=True)
class Project:
    """A loaded, validated project file."""

    path: Path
    name: str
    crs: str | None
    output: Path
    geopackage: str
    inputs: dict[str, ProjectInput]
    steps: tuple[Step, ...]
    domains_input: str | None = None
    domains_field: str | None = None


@dataclass(frozen=True)
class RunResult:
    """What a run wrote: the GeoPackage, its layers (name to row count) and the other files."""

    geopackage: Path
    layers: dict[str, int]
    files: list[Path] = field(default_factory=list)


# --------------------------------------------------------------------------- key lines

_BARE_OR_QUOTED = r'(?:[A-Za-z0-9_-]+|"[^"]*"|\'[^\']*\')'
_DOTTED = rf"{_BARE_OR_QUOTED}(?:\s*\.\s*{_BARE_OR_QUOTED})*"
_KEY_LINE = re.compile(rf"^({_DOTTED})\s*=")
_TABLE = re.compile(rf"^\[\s*({_DOTTED})\s*\]$")
_ARRAY_TABLE = re.compile(rf"^\[\[\s*({_DOTTED})\s*\]\]$")


def _split_dotted(text: str) -> list[str]:
    return [k.strip().strip("\"'") for k in re.findall(_BARE_OR_QUOTED, text)]


def _strip_comment(line: str) -> str:
    quote = None
    for i, ch in enumerate(line):
        if quote:
            if ch == quote:
                quote = None
        elif ch in "\"'":
            quote = ch
        elif ch == "#":
            return line[:i]
    return line


def key_line(text: str, path: tuple[str | int, ...]) -> int | None:
    """Line number (1-based) where the key at ``path`` is written in TOML ``text``.

    ``path`` holds table keys and array-of-tables indices (0-based), such as
    ``("steps", 1, "params", "column")``. Keys inside one-line inline tables
    are found too. When the key itself is not written (a missing key) the line
    of the deepest enclosing table is given; ``None`` when nothing matches.

    Examples
    --------
    >>> text = "[[steps]]\\ntool = 'a'\\n[[steps]]\\ntool = 'b'\\nparams = { colum = 1 }\\n"
    >>> key_line(text, ("steps", 1, "params", "colum"))
    5
    >>> key_line(text, ("steps", 1))
    3
    """
    target = tuple(path)
    header: tuple[str | int, ...] = ()
    arrays: dict[tuple[str | int, ...], int] = {}
    best, best_depth = None, 0

    def resolve(keys: list[str]) -> tuple[str | int, ...]:
        out: tuple[str | int, ...] = ()
        for key in keys:
            out += (key,)
            if out in arrays:
                out += (arrays[out],)
        return out

    for number, raw in enumerate(text.splitlines(), start=1):
        line = _strip_comment(raw).strip()
        m = _ARRAY_TABLE.match(line)
        if m:
            keys = _split_dotted(m.group(1))
            base = resolve(keys[:-1]) + (keys[-1],)
            arrays[base] = arrays.get(base, -1) + 1
            header = base + (arrays[base],)
            found = header
        elif (m := _TABLE.match(line)) is not None:
            header = resolve(_split_dotted(m.group(1)))
            found = header
        elif (m := _KEY_LINE.match(line)) is not None:
            found = header + tuple(_split_dotted(m.group(1)))
            rest = target[len(found) :]
            if found == target[: len(found)] and len(rest) == 1 and isinstance(rest[0], str):
                if re.search(rf"[{{,]\s*[\"']?{re.escape(rest[0])}[\"']?\s*=", line[m.end() :]):
                    return number
        else:
            continue
        if found == target:
            return number
        depth = len(found)
        if found == target[:depth] and depth > best_depth:
            best, best_depth = number, depth
    return best


# --------------------------------------------------------------------------- loading


class _Checker:
    """Raises errors that name the project file, the line and the key."""

    def __init__(self, path: Path, text: str) -> None:
        self.path, self.text = path, text

    def error(self, where: tuple[str | int, ...], message: str) -> InputError:
        line = key_line(self.text, where)
        prefix = f"line {line}: " if line is not None else ""
        err = InputError(prefix + message, source=str(self.path))
        err.field = ".".join(str(k) for k in where if isinstance(k, str)) or None
        return err

    def table(self, value: Any, where: tuple[str | int, ...], label: str) -> dict[str, Any]:
        if not isinstance(value, dict):
            raise self.error(where, f"{label} must be a table; got {type(value).__name__}")
        return value

    def keys(
        self,
        table: Mapping[str, Any],
        allowed: tuple[str, ...],
        where: tuple[str | int, ...],
        label: str,
    ) -> None:
        for key in table:
            if key not in allowed:
                raise self.error(
                    where + (key,),
                    f"unknown key {key!r} in {label}; valid keys: {', '.join(allowed)}",
                )

    def string(
        self, table: Mapping[str, Any], key: str, where: tuple[str | int, ...], label: str
    ) -> str | None:
        value = table.get(key)
        if value is not None and not isinstance(value, str):
            raise self.error(where + (key,), f"{key} in {label} must be text; got {value!r}")
        return value


def _where_step(index: int, step: Mapping[str, Any]) -> str:
    name = step.get("id") or step.get("tool")
    return f"[[steps]] #{index + 1}" + (f" ({name})" if isinstance(name, str) else "")


def load_project(path: str | Path) -> Project:
    """Read and validate a project file; nothing is read or run yet.

    Parameters
    ----------
    path : str or Path
        The TOML project file.

    Returns
    -------
    Project

    Raises
    ------
    SourceNotFoundError
        When the project file does not exist.
    InputError
        For invalid TOML, unknown keys, tools, inputs, parameters or references
        and invalid values; the message names the line and the key.
    ToolLoadError
        When a step names a tool whose plugin failed to load.

    Examples
    --------
    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> _ = (folder / "p.toml").write_text(
    ...     '[inputs.sheet]\\npath = "s.csv"\\n[[steps]]\\ntool = "convert-attitudes"\\n'
    ...     'inputs = { table = "sheet" }\\n')
    >>> project = load_project(folder / "p.toml")
    >>> [s.id for s in project.steps], project.geopackage
    (['convert-attitudes'], 'thrustmap.gpkg')
    """
    path = Path(path)
    if not path.exists():
        raise SourceNotFoundError(f"file {path}: not found")
    text = path.read_text(encoding="utf-8")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", source=str(path)) from None
    check = _Checker(path, text)
    check.keys(data, _KEYS["top"], (), "the top level")
    base = path.parent

    meta = check.table(data.get("project", {}), ("project",), "[project]")
    check.keys(meta, _KEYS["project"], ("project",), "[project]")
    crs = check.string(meta, "crs", ("project",), "[project]")
    if crs is not None:
        try:
            working_crs(crs)
        except InputError as exc:
            raise check.error(("project", "crs"), str(exc)) from None
    output = _join(base, check.string(meta, "output", ("project",), "[project]") or "out")
    geopackage = check.string(meta, "geopackage", ("project",), "[project]") or "thrustmap.gpkg"

    inputs = {
        name: _load_input(check, base, name, spec)
        for name, spec in check.table(data.get("inputs", {}), ("inputs",), "[inputs]").items()
    }

    domains = check.table(data.get("domains", {}), ("domains",), "[domains]")
    check.keys(domains, _KEYS["domains"], ("domains",), "[domains]")
    domains_input = check.string(domains, "input", ("domains",), "[domains]")
    if domains_input is not None and domains_input not in inputs:
        raise check.error(
            ("domains", "input"),
            f"[domains] input {domains_input!r} is not a project input; inputs are: {', '.join(inputs)}",
        )
    domains_field = check.string(domains, "field", ("domains",), "[domains]")

    raw_steps = data.get("steps", [])
    if not isinstance(raw_steps, list):
        raise check.error(("steps",), "steps must be written as [[steps]] tables")
    steps: list[Step] = []
    for index, raw in enumerate(raw_steps):
        steps.append(
            _load_step(check, index, raw, crs, inputs, steps, domains_input, domains_field)
        )
    _check_unique_outputs(check, steps)
    return Project(
        path=path,
        name=str(meta.get("name", path.stem)),
        crs=crs,
        output=output,
        geopackage=geopackage,
        inputs=inputs,
        steps=tuple(steps),
        domains_input=domains_input,
        domains_field=domains_field,
    )


def _load_input(check: _Checker, base: Path, name: str, spec: Any) -> ProjectInput:
    where = ("inputs", name)
    label = f"[inputs.{name}]"
    spec = check.table(spec, where, label)
    check.keys(spec, _KEYS["input"], where, label)
    if not _NAME.match(name):
        raise check.error(where, f"input name {name!r} must be letters, digits, '_' or '-'")
    relative = check.string(spec, "path", where, label)
    if relative is None:
        raise check.error(where, f"{label} needs a path")
    crs = check.string(spec, "crs", where, label)
    if crs is not None:
        try:
            parse_crs(crs)
        except InputError as exc:
            raise check.error(where + ("crs",), str(exc)) from None
    values: dict[str, Any] = {}
    for key, param in (("azimuth_ref", AZIMUTH_REF), ("declination", DECLINATION)):
        if key in spec:
            try:
                values[key] = param.validate(spec[key], tool=label)
            except ParameterError as exc:
                raise check.error(where + (key,), str(exc)) from None
    date = spec.get("date")
    if date is not None:
        try:
            date = dt.date.fromisoformat(str(date)).isoformat()
        except ValueError:
            raise check.error(
                where + ("date",), f"date {date!r} in {label} is not an ISO date (YYYY-MM-DD)"
            ) from None
    return ProjectInput(
        name=name,
        path=_join(base, relative),
        layer=check.string(spec, "layer", where, label),
        crs=crs,
        azimuth_ref=values.get("azimuth_ref"),
        declination=values.get("declination"),
        date=date,
    )


def _join(base: Path, relative: str) -> Path:
    return Path(os.path.normpath(base / relative))


def _geometry_fits(produced: str, expected: str) -> bool:
    return expected in ("any", "table") or produced in ("any", expected)


def _load_step(
    check: _Checker,
    index: int,
    raw: Any,
    crs: str | None,
    inputs: dict[str, ProjectInput],
    earlier: list[Step],
    domains_input: str | None,
    domains_field: str | None,
) -> Step:
    where: tuple[str | int, ...] = ("steps", index)
    raw = check.table(raw, where, f"[[steps]] #{index + 1}")
    label = _where_step(index, raw)
    check.keys(raw, _KEYS["step"], where, label)
    name = check.string(raw, "tool", where, label)
    if name is None:
        raise check.error(where, f"{label} needs a tool")
    try:
        tool = registry.get_tool(name)
    except (ParameterError, ToolLoadError) as exc:
        raise check.error(where + ("tool",), str(exc)) from None
    step_id = check.string(raw, "id", where, label) or tool.name
    if not _NAME.match(step_id):
        raise check.error(
            where + ("id",), f"step id {step_id!r} must be letters, digits, '_' or '-'"
        )
    if any(s.id == step_id for s in earlier):
        raise check.error(
            where + ("id",) if "id" in raw else where,
            f'{label}: step id {step_id!r} is already used; give this step its own id = "..."',
        )

    refs = _wire_inputs(check, where, label, tool, raw, inputs, earlier, domains_input)
    defaults: dict[str, Any] = {"crs": crs, "domain_field": domains_field}
    params = _step_params(check, where, label, tool, raw, refs, inputs, defaults)
    names = _step_outputs(check, where, label, tool, raw)
    return Step(id=step_id, tool=tool, inputs=refs, params=params, outputs=names)


def _wire_inputs(
    check: _Checker,
    where: tuple[str | int, ...],
    label: str,
    tool: Tool,
    raw: Mapping[str, Any],
    inputs: dict[str, ProjectInput],
    earlier: list[Step],
    domains_input: str | None,
) -> dict[str, str]:
    wiring = check.table(raw.get("inputs", {}), where + ("inputs",), f"{label} inputs")
    names = [i.name for i in tool.inputs]
    refs: dict[str, str] = {}
    for key, ref in wiring.items():
        at = where + ("inputs", key)
        if key not in names:
            raise check.error(
                at,
                f"unknown key {key!r} in {label} inputs; {tool.name} inputs are: {', '.join(names)}",
            )
        if not isinstance(ref, str):
            raise check.error(
                at, f"input {key!r} in {label} must name a project input or step.output"
            )
        _check_ref(check, at, label, tool.input(key).geometry, ref, inputs, earlier)
        refs[key] = ref
    if "domains" in names and "domains" not in refs and domains_input:
        refs["domains"] = domains_input
    for i in tool.inputs:
        if not i.optional and i.name not in refs:
            raise check.error(
                where,
                f'{label}: tool input {i.name!r} is not wired; add inputs = {{ {i.name} = "..." }}',
            )
    return refs


def _step_params(
    check: _Checker,
    where: tuple[str | int, ...],
    label: str,
    tool: Tool,
    raw: Mapping[str, Any],
    refs: dict[str, str],
    inputs: dict[str, ProjectInput],
    defaults: dict[str, Any],
) -> dict[str, Any]:
    given = check.table(raw.get("params", {}), where + ("params",), f"{label} params")
    params: dict[str, Any] = {}
    for key, value in given.items():
        try:
            params[key] = tool.param(key).validate(value, tool=tool.name)
        except ParameterError as exc:
            message = str(exc)
            if message.startswith(f"{tool.name}: unknown parameter"):
                message = f"unknown key {key!r} in {label} params; " + message.split("; ", 1)[1]
            raise check.error(where + ("params", key), message) from None
    declared = {p.name for p in tool.params}
    defaults = dict(defaults)
    for meta in _INPUT_METADATA:
        found = {getattr(inputs[r], meta) for r in refs.values() if r in inputs} - {None}
        if len(found) > 1 and meta in declared and meta not in params:
            raise check.error(
                where,
                f"{label}: its inputs disagree on {meta} ({', '.join(map(str, sorted(found)))}); "
                f"set params = {{ {meta} = ... }}",
            )
        defaults[meta] = found.pop() if found else None
    for key, value in defaults.items():
        if key in declared and key not in params and value is not None:
            params[key] = value
    return tool.validate_params(params)


def _step_outputs(
    check: _Checker, where: tuple[str | int, ...], label: str, tool: Tool, raw: Mapping[str, Any]
) -> dict[str, str]:
    renames = check.table(raw.get("outputs", {}), where + ("outputs",), f"{label} outputs")
    names = {o.name: o.name if isinstance(o, LayerOutput) else o.filename for o in tool.outputs}
    for key, value in renames.items():
        at = where + ("outputs", key)
        if key not in names:
            raise check.error(
                at,
                f"unknown key {key!r} in {label} outputs; {tool.name} outputs are: {', '.join(names)}",
            )
        if not isinstance(value, str) or not value:
            raise check.error(at, f"output {key!r} in {label} must be renamed to a text")
        if Path(value).is_absolute() or ".." in Path(value).parts:
            raise check.error(at, f"output {key!r} in {label} must stay inside the output folder")
        names[key] = value
    return names


def _check_ref(
    check: _Checker,
    at: tuple[str | int, ...],
    label: str,
    expected: str,
    ref: str,
    inputs: dict[str, ProjectInput],
    earlier: list[Step],
) -> None:
    if ref in inputs:
        return
    step_id, _, output = ref.partition(".")
    producer = next((s for s in earlier if s.id == step_id), None)
    if producer is None:
        choices = list(inputs) + [
            f"{s.id}.{o.name}"
            for s in earlier
            for o in s.tool.outputs
            if isinstance(o, LayerOutput)
        ]
        raise check.error(
            at,
            f"{label} reads {ref!r}, which is neither a project input nor an output of an earlier "
            f"step; choose one of: {', '.join(choices) or 'none'}",
        )
    layer_outputs = {o.name: o for o in producer.tool.outputs if isinstance(o, LayerOutput)}
    if output not in layer_outputs:
        raise check.error(
            at,
            f"{label} reads {ref!r}, but step {step_id!r} has no layer output {output!r}; "
            f"its layer outputs are: {', '.join(layer_outputs) or 'none'}",
        )
    produced = layer_outputs[output].geometry
    if not _geometry_fits(produced, expected):
        raise check.error(at, f"{label} needs a {expected} layer but {ref!r} is a {produced} layer")


def _check_unique_outputs(check: _Checker, steps: list[Step]) -> None:
    owners: dict[str, str] = {f"layer {PROVENANCE_LAYER}": "the run itself"}
    for index, step in enumerate(steps):
        for out in step.tool.outputs:
            kind = "layer" if isinstance(out, LayerOutput) else "file"
            target = f"{kind} {step.outputs[out.name]}"
            if target in owners:
                raise check.error(
                    ("steps", index),
                    f"{_where_step(index, {'id': step.id})} writes {target}, already written by "
                    f'{owners[target]}; rename it with outputs = {{ {out.name} = "..." }}',
                )
            owners[target] = f"step {step.id!r}"


# --------------------------------------------------------------------------- running


def _relative(path: Path, base: Path) -> str:
    try:
        return path.relative_to(base).as_posix()
    except ValueError:
        return path.as_posix()


def run_project(
    project: str | Path | Project, *, output: str | Path | None = None, overwrite: bool = False
) -> RunResult:
    """Run every step of a project and write its outputs.

    Inputs are read once, before the first step (so a missing file stops the
    run at once); layers and files are written at the end, atomically, with a
    ``provenance`` table; nothing is written when a step fails.

    Parameters
    ----------
    project : str, Path or Project
        The project file, or a project from :func:`load_project`.
    output : str or Path, optional
        Output folder instead of the project's. Keyword only.
    overwrite : bool
        Replace existing outputs (refused otherwise). Keyword only.

    Returns
    -------
    RunResult

    Raises
    ------
    OutputExistsError
        When an output exists and ``overwrite`` is false (checked before running).
    InputError, SourceNotFoundError, ParameterError
        For bad project files and inputs.
    ThrustmapError
        When a step fails.

    Examples
    --------
    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> _ = (folder / "s.csv").write_text("attitude\\nN30E 45SE\\n")
    >>> _ = (folder / "p.toml").write_text(
    ...     '[inputs.sheet]\\npath = "s.csv"\\n[[steps]]\\ntool = "convert-attitudes"\\n'
    ...     'inputs = { table = "sheet" }\\n')
    >>> run_project(folder / "p.toml").layers
    {'converted_attitudes': 1, 'provenance': 1}
    """
    if not isinstance(project, Project):
        project = load_project(project)
    folder = Path(output) if output is not None else project.output
    geopackage = folder / project.geopackage
    targets = [geopackage]
    for step in project.steps:
        for out in step.tool.outputs:
            if isinstance(out, FileOutput) and not out.is_folder:
                targets.append(folder / step.outputs[out.name])
    runner.check_targets(targets, overwrite=overwrite)

    used = {ref for step in project.steps for ref in step.inputs.values() if ref in project.inputs}
    frames: dict[str, pd.DataFrame] = {}
    for name in sorted(used):
        spec = project.inputs[name]
        frames[name] = read_source(spec.path, layer=spec.layer, crs=spec.crs, to_crs=project.crs)
    base = project.path.parent
    digests = {name: file_sha256(project.inputs[name].path) for name in sorted(used)}
    layers: dict[str, pd.DataFrame] = {}
    files: dict[str, Any] = {}
    produced: dict[str, pd.DataFrame] = {}
    provenance = []
    for number, step in enumerate(project.steps, start=1):
        log.info("step %d/%d: %s (%s)", number, len(project.steps), step.id, step.tool.name)
        given = {}
        for key, ref in step.inputs.items():
            source = frames[ref] if ref in frames else produced[ref]
            step.tool.input(key).check(
                source, source=source.attrs.get("source"), layer=source.attrs.get("layer")
            )
            given[key] = source.copy()
        started = dt.datetime.now(dt.UTC)
        clock = time.perf_counter()
        try:
            results = step.tool.run(given, step.params)
            step_layers, step_files = runner.collect_outputs(step.tool, results, names=step.outputs)
        except Exception:
            log.error("step %r (%s) failed", step.id, step.tool.name)
            raise
        for out in step.tool.outputs:
            if isinstance(out, LayerOutput):
                frame = step_layers[step.outputs[out.name]]
                frame.attrs.update(source=str(geopackage), layer=step.outputs[out.name])
                produced[f"{step.id}.{out.name}"] = frame
        layers.update(step_layers)
        files.update(step_files)
        provenance.append(
            {
                "step": number,
                "id": step.id,
                "tool": step.tool.name,
                "origin": step.tool.origin,
                "tool_version": _version_of(step.tool.origin),
                "inputs": json.dumps(
                    {
                        k: _relative(project.inputs[r].path, base) if r in project.inputs else r
                        for k, r in step.inputs.items()
                    }
                ),
                "input_sha256": json.dumps(
                    {k: digests[r] for k, r in step.inputs.items() if r in digests}
                ),
                "params": json.dumps(step.params, default=str),
                "outputs": json.dumps(step.outputs),
                "started_utc": started.isoformat(timespec="seconds"),
                "seconds": round(time.perf_counter() - clock, 3),
                "project": project.path.name,
                "thrustmap_version": __version__,
            }
        )
    table = pd.DataFrame(provenance, columns=_PROVENANCE_COLUMNS)
    written = runner.write_outputs(
        {**layers, PROVENANCE_LAYER: table},
        files,
        geopackage=geopackage,
        folder=folder,
        overwrite=overwrite,
    )
    sidecar = {
        "thrustmap_version": __version__,
        "created_utc": dt.datetime.now(dt.UTC).isoformat(timespec="seconds"),
        "project": {"name": project.path.name, "sha256": file_sha256(project.path)},
        "inputs": [
            {
                "name": name,
                "path": _relative(project.inputs[name].path, base),
                "layer": project.inputs[name].layer,
                "sha256": digest,
                "bytes": project.inputs[name].path.stat().st_size,
            }
            for name, digest in digests.items()
        ],
        "steps": provenance,
        "geopackage": {"name": geopackage.name, "sha256": file_sha256(geopackage)},
    }
    write_file(sidecar_path(geopackage), json.dumps(sidecar, indent=2) + "\n", overwrite=True)
    return RunResult(
        geopackage=geopackage,
        layers={name: len(frame) for name, frame in {**layers, PROVENANCE_LAYER: table}.items()},
        files=written[1:],
    )


_PROVENANCE_COLUMNS = [
    "step",
    "id",
    "tool",
    "origin",
    "tool_version",
    "inputs",
    "input_sha256",
    "params",
    "outputs",
    "started_utc",
    "seconds",
    "project",
    "thrustmap_version",
]


def _version_of(distribution: str) -> str:
    try:
        return metadata.version(distribution)
    except metadata.PackageNotFoundError:
        return ""
