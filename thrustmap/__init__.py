"""thrustmap: geoprocessing for mapping fold-and-thrust belts."""

from thrustmap._version import __version__
from thrustmap.errors import ThrustmapError
from thrustmap.folds import fit_fold
from thrustmap.orientation import parse_plane, parse_planes

__all__ = ["__version__", "ThrustmapError", "parse_plane", "parse_planes", "fit_fold"]
