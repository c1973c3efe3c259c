# Quick start: `make demo` and `make test` set themselves up on a fresh machine.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

.PHONY: setup test demo bench lint clean

$(STAMP): pyproject.toml
	test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install -q --upgrade pip
	$(BIN)/python -m pip install -q -e '.[test]'
	touch $(STAMP)

setup: $(STAMP)

test: $(STAMP)
	$(BIN)/python -m pytest -q

demo: $(STAMP)
	$(BIN)/thrustmap demo

bench: $(STAMP)
	$(BIN)/python -m bench

lint: $(STAMP)
	$(BIN)/ruff check thrustmap tests bench

clean:
	rm -rf out build dist *.egg-info .pytest_cache

.PHONY: sample
# Regenerate the synthetic demo data in sample_gis/ (see sample_gis/README.md).
sample: $(STAMP)
	$(BIN)/python -m thrustmap.synth sample_gis --overwrite

# Desktop GIS (QGIS from the Debian archive): the plugin zip, its tests, and the main
# suite again on the GIS's Debian-pinned Python stack (.venv-gis, made by the setup script).
GIS_ENV := QT_QPA_PLATFORM=offscreen PROJ_DATA=/usr/share/proj
.PHONY: gis-plugin test-gis test-gis-stack
gis-plugin:
	$(PYTHON) scripts/build_gis_plugin.py

test-gis: gis-plugin
	bash scripts/setup_gis_env.sh
	$(GIS_ENV) .venv-gis/bin/python -m pytest -q tests_gis

test-gis-stack:
	bash scripts/setup_gis_env.sh
	$(GIS_ENV) .venv-gis/bin/python -m pytest -q
