"""thrustmap: geoprocessing for mapping fold-and-thrust belts."""

from thrustmap._version import __version__
from thrustmap.errors import ThrustmapError
from thrustmap.io.attitudes import read_attitudes
from thrustmap.orientation import parse_plane, parse_planes

__all__ = ["__version__", "ThrustmapError", "parse_plane", "parse_planes", "read_attitudes"]

from thrustmap.thrusts import analyze_thrusts  # noqa: E402

__all__ += ["analyze_thrusts"]
