"""Exception and warning hierarchy: every error thrustmap raises derives from ThrustmapError."""

from __future__ import annotations

__all__ = [
    "ThrustmapError",
    "InputError",
    "AttitudeParseError",
    "CRSError",
    "ParameterError",
    "DegenerateDataError",
    "OutputExistsError",
    "ThrustmapWarning",
    "SourceNotFoundError",
    "ToolLoadError",
]


class ThrustmapError(Exception):
    """Root of every error raised by thrustmap."""


class InputError(ThrustmapError, ValueError):
    """Bad input data; the message names the file, layer, row and field where known."""

    def __init__(
        self,
        message: str,
        *,
        source: str | None = None,
        layer: str | None = None,
        row: int | None = None,
        field: str | None = None,
        value: object = None,
    ) -> None:
        self.source, self.layer, self.row, self.field, self.value = source, layer, row, field, value
        where = []
        if source is not None:
            where.append(f"file {source}")
        if layer is not None:
            where.append(f"layer {layer}")
        if row is not None:
            where.append(f"row {row}")
        if field is not None:
            where.append(f"field {field!r}")
        prefix = ", ".join(where)
        super().__init__(f"{prefix}: {message}" if prefix else message)


class AttitudeParseError(InputError):
    """An attitude (plane or line) text that cannot be read."""


class CRSError(InputError):
    """A missing, unknown or unsuitable coordinate reference system."""


class ParameterError(ThrustmapError, ValueError):
    """A parameter value out of range, of the wrong type or not among the choices."""


class DegenerateDataError(ThrustmapError, ValueError):
    """Data that admit no defined answer (too few values, no spread, no intersection)."""


class OutputExistsError(ThrustmapError, FileExistsError):
    """An output exists and overwriting was not asked for."""


class ThrustmapWarning(UserWarning):
    """Warnings thrustmap raises about data quality or questionable results."""


class SourceNotFoundError(ThrustmapError, FileNotFoundError):
    """An input file that does not exist; the message names the path."""


class ToolLoadError(ThrustmapError, ImportError):
    """A tool plugin that failed to load; the message names the entry point and the cause."""
