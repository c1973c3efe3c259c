"""The processing provider: one algorithm per tool found by ``thrustmap.tools.registry``."""

from qgis.core import Qgis, QgsMessageLog, QgsProcessingProvider

import thrustmap
from thrustmap.tools import registry

from .algorithm import ThrustmapAlgorithm

__all__ = ["ThrustmapProvider", "PROVIDER_ID", "LOG_TAG"]

PROVIDER_ID = "thrustmap"
LOG_TAG = "thrustmap"


class ThrustmapProvider(QgsProcessingProvider):
    """Lists the declared thrustmap tools (built-in and from other packages) as algorithms.

    The tools are read again whenever the GIS refreshes its algorithms, so a
    newly installed tool package appears without reinstalling the plugin. A
    declaration that cannot be turned into an algorithm is reported in the
    GIS's log under the ``thrustmap`` tab and left out; the others still load.
    """

    def id(self):
        return PROVIDER_ID

    def name(self):
        return "thrustmap"

    def longName(self):  # noqa: N802 - GIS API names
        return f"thrustmap {thrustmap.__version__}"

    def versionInfo(self):  # noqa: N802
        return thrustmap.__version__

    def loadAlgorithms(self):  # noqa: N802
        registry.refresh()  # a tool package installed since the last load appears
        for broken in registry.list_broken():
            QgsMessageLog.logMessage(
                f"tool {broken.name!r} from {broken.origin} ({broken.entry_point}) is unavailable: "
                f"{broken.error}",
                LOG_TAG,
                Qgis.Warning,
            )
        for tool in registry.list_tools():
            try:
                algorithm = ThrustmapAlgorithm(tool)
            except ValueError as error:
                QgsMessageLog.logMessage(str(error), LOG_TAG, Qgis.Critical)
                continue
            if not self.addAlgorithm(algorithm):
                QgsMessageLog.logMessage(
                    f"tool {tool.name!r} from {tool.origin} could not be added",
                    LOG_TAG,
                    Qgis.Critical,
                )
