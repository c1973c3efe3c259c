"""Locations in the bundled synthetic scenario, used by the tools' worked examples."""

from __future__ import annotations

from pathlib import Path

from thrustmap.errors import SourceNotFoundError

__all__ = ["SAMPLE", "SCENARIO", "scenario", "sample_file", "sample_attitudes"]

# The worked examples read the bundled synthetic scenario of a source checkout.
SAMPLE = Path(__file__).resolve().parents[2] / "sample_gis"
SCENARIO = SAMPLE / "scenario.gpkg"


def sample_file(name: str) -> Path:
    """Path of a file of the bundled scenario; a clear error outside a source checkout."""
    path = SAMPLE / name
    if not path.exists():
        raise SourceNotFoundError(
            f"file {path}: not found; the worked examples read the bundled synthetic sample_gis/ "
            "of a source checkout"
        )
    return path


def scenario(layer: str) -> str:
    """``path:layer`` source of a layer of the scenario GeoPackage."""
    return f"{sample_file(SCENARIO.name)}:{layer}"


def sample_attitudes():
    """The scenario's station attitudes as :func:`thrustmap.read_attitudes` accepts them."""
    from thrustmap.io.attitudes import read_attitudes

    return read_attitudes(str(SCENARIO), layer="stations").accepted
