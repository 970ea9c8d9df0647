# The two set-up commands of the README: `make demo` and `make test`.
# Each creates .venv itself and installs everything it needs.
# `make test` = `make lint` (ruff + mypy), then .ci/browser (Debian's chromium
# for the tests that look at the report), then pytest. CI runs `make test`.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

.PHONY: demo test lint bench clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

demo: $(STAMP)
	$(BIN)/fleetsim check scenarios/pump_stations.toml
	$(BIN)/fleetsim run scenarios/pump_stations.toml

test: lint
	bash .ci/browser
	$(BIN)/python -m pytest

lint: $(STAMP)
	$(BIN)/python -m ruff check fleetsim tests benchmarks
	$(BIN)/python -m mypy fleetsim

bench: $(STAMP)
	$(BIN)/python benchmarks/run_benchmarks.py

clean:
	rm -rf $(VENV) .pytest_cache build *.egg-info
