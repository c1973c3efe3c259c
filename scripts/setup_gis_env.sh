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
# Debian's pyproj run from a venv does not find the PROJ database by itself.
export PROJ_DATA=${PROJ_DATA:-/usr/share/proj}
SYSTEM_PYTHON=/usr/bin/python3
SYSTEM_SITE=/usr/lib/python3/dist-packages
APT_PACKAGES=(qgis python3-qgis qgis-providers python3-fiona python3-venv python3-dev libgeos-dev libgdal-dev)
# Built from source against the system GEOS/GDAL instead of wheels bundling their own copies.
NO_BINARY=shapely,pyogrio
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
    $SUDO apt-get -o DPkg::Lock::Timeout=900 install -y -qq --no-install-recommends \
        "${APT_PACKAGES[@]}" >/dev/null
fi

stamp_value=$(cat pyproject.toml scripts/setup_gis_env.sh | sha256sum | cut -d' ' -f1)
if [ -x "$VENV/bin/python" ] && [ "$(cat "$VENV/.installed" 2>/dev/null)" = "$stamp_value" ]; then
    log "$VENV is up to date"
    exit 0
fi

# A fresh venv each time the inputs change: stale packages there would shadow Debian's.
rm -rf "$VENV"
"$SYSTEM_PYTHON" -m venv --system-site-packages "$VENV"
"$VENV/bin/python" -m pip list --disable-pip-version-check --path "$SYSTEM_SITE" --format=freeze \
    > "$VENV/debian-constraints.txt"
# matplotlib-inline 0.2 reads rcParams._get, added in matplotlib 3.7 (Debian 12 ships 3.6).
echo "matplotlib-inline<0.2" >> "$VENV/debian-constraints.txt"
log "installing thrustmap and its test extras into $VENV"
"$VENV/bin/python" -m pip install -q --disable-pip-version-check \
    -c "$VENV/debian-constraints.txt" --no-binary "$NO_BINARY" \
    --use-feature=no-binary-enable-wheel-cache \
    -e '.[test]'
echo "$stamp_value" > "$VENV/.installed"
log "$VENV ready"
