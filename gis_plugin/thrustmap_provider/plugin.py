"""The plugin object the GIS loads: registers the thrustmap processing provider."""

import sys

from qgis.core import Qgis, QgsApplication, QgsMessageLog

__all__ = ["ThrustmapPlugin"]


class ThrustmapPlugin:
    """Registers the provider at start-up and removes it when the plugin is unloaded."""

    def __init__(self, iface):
        self.iface = iface
        self.provider = None

    def initProcessing(self):  # noqa: N802 - GIS API names
        """Register the provider (called by the GIS, also from its command-line runner)."""
        if self.provider is not None:
            return
        try:
            from .provider import ThrustmapProvider
        except ImportError as error:
            QgsMessageLog.logMessage(
                f"the thrustmap package cannot be imported in the GIS's Python "
                f"(Python {sys.version.split()[0]}; {error}). Install thrustmap where this Python "
                "finds it, for example a virtual environment made with --system-site-packages "
                "whose site-packages folder is on PYTHONPATH; see the thrustmap README, "
                "'Use from the desktop GIS'.",
                "thrustmap",
                Qgis.Critical,
            )
            return
        self.provider = ThrustmapProvider()
        QgsApplication.processingRegistry().addProvider(self.provider)

    def initGui(self):  # noqa: N802
        self.initProcessing()

    def unload(self):
        if self.provider is not None:
            QgsApplication.processingRegistry().removeProvider(self.provider)
            self.provider = None
