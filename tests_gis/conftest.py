"""Headless desktop-GIS session for the provider tests (run by `make test-gis` in .venv-gis).

The stand-in third-party tool package in ``sample_plugin/`` is registered in the
``thrustmap.tools`` entry-point group through a temporary ``dist-info`` folder
put on ``sys.path`` before collection, so the registry finds it exactly as it
would find an installed package.
"""

import gc
import os
import shutil
import sys
import tempfile
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
SAMPLE_PLUGIN = HERE / "sample_plugin"
GIS_PLUGIN = ROOT / "gis_plugin"
SYSTEM_PLUGINS = "/usr/share/qgis/python/plugins"

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
os.environ.setdefault("PROJ_DATA", "/usr/share/proj")

ENTRY_POINTS = "[thrustmap.tools]\nsample = thrustmap_gis_sample_tools:TOOLS\n"
METADATA = "Metadata-Version: 2.1\nName: thrustmap-gis-sample-tools\nVersion: 0.1\n"

# Folders the tests put on sys.path; a command-line GIS run needs them on PYTHONPATH too.
EXTRA_PATH: list[str] = []


def pytest_configure(config):
    folder = Path(tempfile.mkdtemp(prefix="thrustmap-gis-entry-points-"))
    info = folder / "thrustmap_gis_sample_tools-0.1.dist-info"
    info.mkdir()
    (info / "METADATA").write_text(METADATA)
    (info / "entry_points.txt").write_text(ENTRY_POINTS)
    config.add_cleanup(lambda: shutil.rmtree(folder, ignore_errors=True))
    EXTRA_PATH[:] = [str(folder), str(SAMPLE_PLUGIN)]
    sys.path[:0] = [*EXTRA_PATH, str(GIS_PLUGIN)]


@pytest.fixture(scope="session")
def extra_path():
    """Folders holding the sample tool package and its entry point."""
    return list(EXTRA_PATH)


@pytest.fixture(scope="session")
def qgis_app():
    """A headless GIS application with Processing and the thrustmap provider loaded."""
    from qgis.core import QgsApplication, QgsProject

    QgsApplication.setPrefixPath("/usr", True)
    app = QgsApplication([], False)
    app.initQgis()
    if SYSTEM_PLUGINS not in sys.path:
        sys.path.append(SYSTEM_PLUGINS)
    from processing.core.Processing import Processing

    Processing.initialize()
    import thrustmap_provider

    plugin = thrustmap_provider.classFactory(None)
    plugin.initProcessing()
    yield app
    plugin.unload()
    QgsProject.instance().clear()
    gc.collect()
    app.exitQgis()


@pytest.fixture(scope="session")
def provider(qgis_app):
    from qgis.core import QgsApplication

    return QgsApplication.processingRegistry().providerById("thrustmap")
