"""thrustmap's processing provider for the desktop GIS.

The algorithms are generated at load time from the declared thrustmap tools;
thrustmap itself must be importable from the GIS's Python (see the README,
"Use from the desktop GIS").
"""


def classFactory(iface):  # noqa: N802 - the name the GIS's plugin loader calls
    """Entry point called by the GIS's plugin loader."""
    from .plugin import ThrustmapPlugin

    return ThrustmapPlugin(iface)
