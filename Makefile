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
