# fame-estimator: set-up, demo and tests. Everything installs into .venv from scratch.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
OUT    := out/demo
DEMO   := data/demo

.PHONY: demo test lint install install-test clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install -q --upgrade pip

$(VENV)/.installed: $(BIN)/python setup.cfg pyproject.toml
	$(BIN)/pip install -q -e .
	touch $@

$(VENV)/.installed-test: $(BIN)/python setup.cfg pyproject.toml
	$(BIN)/pip install -q -e '.[test]'
	touch $@ $(VENV)/.installed

install: $(VENV)/.installed
install-test: $(VENV)/.installed-test

## make demo: install, then run the main job on the invented demo scenario into out/demo/
demo: install
	@mkdir -p $(OUT)
	$(BIN)/fame-estimator report $(DEMO)/scenario.json -o $(OUT)
	$(BIN)/fame-estimator predict $(DEMO)/lots.csv --basis fatty-acid -o $(OUT)/estimates.xlsx
	$(BIN)/fame-estimator compare $(DEMO)/lots.csv --basis fatty-acid --climate-class C
	@echo "demo outputs are in $(OUT)/: open $(OUT)/report.html"

lint: install-test
	$(BIN)/ruff check estimator tests scripts

## make test: lint, the test suite with doctests, then the tests against the built wheel
test: lint
	$(BIN)/python -m pytest -q
	$(BIN)/python scripts/test_installed_wheel.py

clean:
	rm -rf $(VENV) out build dist *.egg-info .pytest_cache
