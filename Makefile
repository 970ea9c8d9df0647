# The two set-up commands of the README: `make demo` and `make test`.
# Each creates .venv itself and installs everything it needs.
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
	$(BIN)/fleetsim life --type ball --dynamic-rating "30.7 kN" --static-rating "19 kN" \
	    --radial-load "3.2 kN" --axial-load "1.1 kN" --speed "1480 rpm" --reliability 0.95
	$(BIN)/fleetsim check scenarios/pump_stations.toml
	$(BIN)/fleetsim run scenarios/pump_stations.toml --replications 100 --seed 1

test: $(STAMP)
	$(BIN)/python -m pytest

lint: $(STAMP)
	$(BIN)/python -m ruff check fleetsim tests benchmarks

bench: $(STAMP)
	$(BIN)/python benchmarks/run_benchmarks.py

clean:
	rm -rf $(VENV) .pytest_cache build *.egg-info
