"""Zip gis_plugin/thrustmap_provider as an installable desktop-GIS plugin (dist/thrustmap_provider.zip).

The zip holds the plugin folder only (no thrustmap code, no third-party code):
thrustmap itself must be installed where the GIS's Python finds it.
"""

import argparse
import os
import tempfile
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
PLUGIN = ROOT / "gis_plugin" / "thrustmap_provider"


def build(out: Path) -> Path:
    """Write the plugin zip to ``out`` atomically and return its path."""
    out.parent.mkdir(parents=True, exist_ok=True)
    files = sorted(
        p
        for p in PLUGIN.rglob("*")
        if p.is_file() and "__pycache__" not in p.parts and p.suffix != ".pyc"
    )
    fd, tmp = tempfile.mkstemp(dir=out.parent, suffix=".zip.tmp")
    os.close(fd)
    try:
        with zipfile.ZipFile(tmp, "w", zipfile.ZIP_DEFLATED) as archive:
            for path in files:
                archive.write(path, path.relative_to(PLUGIN.parent).as_posix())
        os.replace(tmp, out)
    finally:
        if os.path.exists(tmp):
            os.remove(tmp)
    return out


if __name__ == "__main__":
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=ROOT / "dist" / "thrustmap_provider.zip")
    print(build(parser.parse_args().out))
