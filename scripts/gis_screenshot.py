"""Save a picture of a thrustmap tool's dialog in the desktop GIS, drawn off-screen.

Run with the GIS's Python: ``QT_QPA_PLATFORM=offscreen PROJ_DATA=/usr/share/proj
.venv-gis/bin/python scripts/gis_screenshot.py [ALGORITHM] [PNG]``.
"""

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def main(algorithm: str, out: Path) -> None:
    sys.path.insert(0, str(ROOT / "gis_plugin"))
    from qgis.core import QgsApplication

    QgsApplication.setPrefixPath("/usr", True)
    app = QgsApplication([], True)
    app.initQgis()
    sys.path.append("/usr/share/qgis/python/plugins")
    import thrustmap_provider
    from processing.core.Processing import Processing
    from processing.gui.AlgorithmDialog import AlgorithmDialog

    Processing.initialize()
    plugin = thrustmap_provider.classFactory(None)
    plugin.initProcessing()
    dialog = AlgorithmDialog(QgsApplication.processingRegistry().createAlgorithmById(algorithm))
    dialog.resize(900, 700)
    dialog.show()
    app.processEvents()
    out.parent.mkdir(parents=True, exist_ok=True)
    saved = dialog.grab().save(str(out))
    dialog.close()
    del dialog
    plugin.unload()
    app.exitQgis()
    if not saved:
        raise SystemExit(f"could not write {out}")
    print(out)


if __name__ == "__main__":
    args = sys.argv[1:]
    main(
        args[0] if args else "thrustmap:wedge-taper",
        Path(args[1]) if len(args) > 1 else ROOT / "docs" / "images" / "gis_dialog.png",
    )
