"""Vendor Leaflet from the npm registry into thrustmap/_assets/, checked by SHA-256.

Run from the repository root with ``python scripts/vendor_leaflet.py``. It
fetches the package tarball with the ordinary npm client (``npm pack``),
refuses a tarball whose SHA-256 differs from the pinned value, extracts the
JavaScript, the CSS (its image URLs turned into data URIs so that the page
needs no file beside it) and the licence text, and writes a manifest with the
SHA-256 of every vendored file; ``thrustmap.webmap.assets`` checks the files
against that manifest when it loads them.
"""

from __future__ import annotations

import base64
import hashlib
import json
import re
import subprocess
import sys
import tarfile
import tempfile
from pathlib import Path

VERSION = "1.9.4"
# SHA-256 of leaflet-1.9.4.tgz as served by the npm registry (its sha1 is
# 23fae724e282fa25745aff82ca4d394748db7d8d, its sha512 integrity nxS1ynzJ...).
TARBALL_SHA256 = "84c65a256e50657896f54c33bd857b6849ebe94c817803be818bf32a3dde0b77"
ASSETS = Path(__file__).resolve().parents[1] / "thrustmap" / "_assets"


def _sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _fetch(workdir: Path) -> Path:
    out = subprocess.run(
        ["npm", "pack", f"leaflet@{VERSION}", "--json", "--pack-destination", str(workdir)],
        check=True,
        capture_output=True,
        text=True,
    )
    name = json.loads(out.stdout)[0]["filename"]
    return workdir / name


def _inline_images(css: str, images: dict[str, bytes]) -> str:
    def repl(match: re.Match[str]) -> str:
        name = match.group(1).split("/")[-1]
        if name not in images:
            raise SystemExit(f"leaflet.css refers to {name!r}, which the tarball does not hold")
        data = base64.b64encode(images[name]).decode("ascii")
        return f"url(data:image/png;base64,{data})"

    return re.sub(r"url\((?:'|\")?(images/[^)'\"]+)(?:'|\")?\)", repl, css)


def main() -> int:
    with tempfile.TemporaryDirectory() as tmp:
        tarball = _fetch(Path(tmp))
        digest = _sha256(tarball.read_bytes())
        if digest != TARBALL_SHA256:
            print(f"refusing {tarball.name}: SHA-256 {digest}, expected {TARBALL_SHA256}")
            return 1
        with tarfile.open(tarball) as tar:
            files = {
                m.name.removeprefix("package/"): tar.extractfile(m).read()
                for m in tar.getmembers()
                if m.isfile()
            }
    images = {
        name.split("/")[-1]: data
        for name, data in files.items()
        if name.startswith("dist/images/")
    }
    css = _inline_images(files["dist/leaflet.css"].decode("utf-8"), images)
    outputs = {
        f"leaflet-{VERSION}.js": files["dist/leaflet.js"],
        f"leaflet-{VERSION}.css": css.encode("utf-8"),
        f"leaflet-{VERSION}-LICENSE.txt": files["LICENSE"],
    }
    ASSETS.mkdir(parents=True, exist_ok=True)
    for name, data in outputs.items():
        (ASSETS / name).write_bytes(data)
    manifest = {
        "package": "leaflet",
        "version": VERSION,
        "licence": "BSD-2-Clause",
        "tarball_sha256": TARBALL_SHA256,
        "files": {name: _sha256(data) for name, data in outputs.items()},
    }
    (ASSETS / "leaflet-manifest.json").write_text(json.dumps(manifest, indent=2) + "\n")
    for name, data in outputs.items():
        print(f"{ASSETS.name}/{name}: {len(data)} bytes")
    return 0


if __name__ == "__main__":
    sys.exit(main())
