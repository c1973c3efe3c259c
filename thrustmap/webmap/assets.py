"""The web map's packaged assets: vendored Leaflet (checked by SHA-256) and thrustmap's own JS/CSS."""

from __future__ import annotations

import hashlib
import json
from functools import cache
from importlib import resources

from thrustmap.errors import ThrustmapError

__all__ = ["asset_text", "leaflet_assets", "LEAFLET_VERSION"]

LEAFLET_VERSION = "1.9.4"


def asset_text(name: str) -> str:
    """Text of a file in ``thrustmap/_assets``.

    Examples
    --------
    >>> "OrientationSet" in asset_text("thrustmap-map.js")
    True
    """
    return resources.files("thrustmap").joinpath("_assets", name).read_text(encoding="utf-8")


@cache
def leaflet_assets() -> dict[str, str]:
    """Leaflet's JavaScript, CSS and licence text, verified against the vendoring manifest.

    The files were fetched from the npm registry by ``scripts/vendor_leaflet.py``,
    which pins the tarball's SHA-256 and records the digest of each file; a
    file that no longer matches its digest is refused.

    Returns
    -------
    dict
        Keys ``js``, ``css``, ``licence`` and ``version``.

    Raises
    ------
    ThrustmapError
        When a vendored file does not match the manifest.

    Examples
    --------
    >>> leaflet_assets()["version"]
    '1.9.4'
    """
    manifest = json.loads(asset_text("leaflet-manifest.json"))
    texts = {}
    for name, digest in manifest["files"].items():
        data = resources.files("thrustmap").joinpath("_assets", name).read_bytes()
        if hashlib.sha256(data).hexdigest() != digest:
            raise ThrustmapError(
                f"vendored asset {name} does not match its SHA-256 in leaflet-manifest.json; "
                "run scripts/vendor_leaflet.py again"
            )
        texts[name] = data.decode("utf-8")
    version = manifest["version"]
    js = texts[f"leaflet-{version}.js"]
    # The source-map comment points at a file that is not shipped; drop it from the page.
    js = "\n".join(line for line in js.splitlines() if not line.startswith("//# sourceMappingURL"))
    return {
        "js": js,
        "css": texts[f"leaflet-{version}.css"],
        "licence": texts[f"leaflet-{version}-LICENSE.txt"],
        "version": version,
    }
