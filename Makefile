# make demo: local virtual environment, install, study the bundled invented sample.
# make test: install the test extra, run the whole test suite (as CI does).
# make quick: the same without the slow fuzzing and scale tests (a plain pytest run).
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin

.PHONY: demo test quick lint samples readme bench clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)

$(VENV)/.installed: pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet --disable-pip-version-check -e .
	touch $@

$(VENV)/.installed-test: pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet --disable-pip-version-check -e '.[test]'
	touch $(VENV)/.installed $@

demo: $(VENV)/.installed
	$(BIN)/faultcalc demo -o faultcalc-demo-results.xlsx --report faultcalc-demo-report.pdf --overwrite
	$(BIN)/faultcalc diagram sample_systems/plant_480v.xlsx -o faultcalc-demo-one-line.pdf --overwrite

test: $(VENV)/.installed-test
	$(BIN)/python -m pytest -m ""

quick: $(VENV)/.installed-test
	$(BIN)/python -m pytest

lint: $(VENV)/.installed-test
	$(BIN)/python -m pip install --quiet ruff
	$(BIN)/ruff check faultcalc tests scripts benchmarks

bench: $(VENV)/.installed
	$(BIN)/python benchmarks/scale.py --sizes 1000000
	$(BIN)/python benchmarks/engine.py
	$(BIN)/python benchmarks/drawn.py
	$(BIN)/python benchmarks/json_write.py
	$(BIN)/python benchmarks/fleet.py
	$(BIN)/python benchmarks/inverters.py
	$(BIN)/python benchmarks/contributions.py
	$(BIN)/python benchmarks/cases.py --single 100
	$(BIN)/python benchmarks/cases.py --single 100 --meshed

samples: $(VENV)/.installed
	$(BIN)/python scripts/make_samples.py

readme: $(VENV)/.installed
	$(BIN)/python scripts/update_readme.py

clean:
	rm -rf $(VENV) build *.egg-info .pytest_cache faultcalc-demo-results.xlsx faultcalc-demo-report.pdf faultcalc-demo-one-line.pdf
