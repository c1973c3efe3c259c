#!/usr/bin/env bash
# Installs the Debian desktop GIS (QGIS) and creates .venv-gis on its Python stack. Idempotent.
#
# Inside the GIS's process, pip wheels that bundle their own GEOS/GDAL/PROJ clash with the
# libraries the GIS loaded, so the venv sees the system packages, pip is constrained to the
# versions Debian installed (fiona comes from Debian too), and shapely and pyogrio, which
# Debian 12 ships too old or not at all, are built from source against the system GEOS/GDAL.
set -euo pipefail
cd "$(dirname "$0")/.."

VENV=${VENV_GIS:-.venv-gis}
SYSTEM_PYTHON=/usr/bin/python3
SYSTEM_SITE=/usr/lib/python3/dist-packages
APT_PACKAGES=(qgis python3-qgis qgis-providers python3-fiona python3-venv python3-dev libgeos-dev libgdal-dev)
# Built from source against the system GEOS/GDAL instead of wheels bundling their own copies.
NO_BINARY=shapely,pyogrio
# Test extras left out of the GIS venv: browser/notebook drivers whose dependencies conflict
# with the Debian-pinned Jupyter stack, and the linter (not run here).
SKIP_EXTRAS="playwright nbclient nbformat ipykernel ruff"

log() { printf 'setup_gis_env: %s\n' "$*" >&2; }

missing=()
for pkg in "${APT_PACKAGES[@]}"; do
    status=$(dpkg-query -W -f='${db:Status-Status}' "$pkg" 2>/dev/null || true)
    [ "$status" = installed ] || missing+=("$pkg")
done
if [ ${#missing[@]} -gt 0 ]; then
    SUDO=""
    [ "$(id -u)" -eq 0 ] || SUDO=sudo
    log "installing ${missing[*]} from the Debian archive"
    export DEBIAN_FRONTEND=noninteractive
    $SUDO apt-get update -qq
    $SUDO apt-get install -y -qq --no-install-recommends "${APT_PACKAGES[@]}" >/dev/null
fi

stamp_value=$(cat pyproject.toml "$0" | sha256sum | cut -d' ' -f1)
if [ -x "$VENV/bin/python" ] && [ "$(cat "$VENV/.installed" 2>/dev/null)" = "$stamp_value" ]; then
    log "$VENV is up to date"
    exit 0
fi

test -x "$VENV/bin/python" || "$SYSTEM_PYTHON" -m venv --system-site-packages "$VENV"
"$VENV/bin/python" -m pip list --disable-pip-version-check --path "$SYSTEM_SITE" --format=freeze \
    > "$VENV/debian-constraints.txt"
"$VENV/bin/python" - "$SKIP_EXTRAS" > "$VENV/test-requirements.txt" <<'PY'
import re
import sys
import tomllib

skip = set(sys.argv[1].split())
with open("pyproject.toml", "rb") as f:
    test = tomllib.load(f)["project"]["optional-dependencies"]["test"]
print("\n".join(r for r in test if re.split(r"[\s<>=!~;\[]", r, maxsplit=1)[0] not in skip))
PY
log "installing thrustmap and its test extras into $VENV"
"$VENV/bin/python" -m pip install -q --disable-pip-version-check \
    -c "$VENV/debian-constraints.txt" --no-binary "$NO_BINARY" \
    --use-feature=no-binary-enable-wheel-cache \
    -e . -r "$VENV/test-requirements.txt"
echo "$stamp_value" > "$VENV/.installed"
log "$VENV ready"
