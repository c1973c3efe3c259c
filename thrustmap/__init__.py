"""thrustmap: geoprocessing for mapping fold-and-thrust belts."""

from thrustmap._version import __version__
from thrustmap.errors import ThrustmapError
from thrustmap.folds import fit_fold
from thrustmap.io.attitudes import read_attitudes
from thrustmap.orientation import parse_plane, parse_planes
from thrustmap.thrusts import analyze_thrusts
from thrustmap.webmap import write_map
from thrustmap.wedge import critical_taper

__all__ = [
    "__version__",
    "ThrustmapError",
    "read_attitudes",
    "parse_plane",
    "parse_planes",
    "fit_fold",
    "analyze_thrusts",
    "critical_taper",
    "write_map",
]
