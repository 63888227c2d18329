# make demo: run the demo study into out/demo/.  make test: run the test suite.
# Both create .venv with everything mastplan needs on first use.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin

.PHONY: demo test lint bench clean

$(BIN)/.installed: pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $@

demo: $(BIN)/.installed
	$(BIN)/mastplan demo --out out/demo --overwrite

test: $(BIN)/.installed
	$(BIN)/python -m pytest

lint: $(BIN)/.installed
	$(BIN)/ruff check geo cli tests benchmarks demo_airfield

bench: $(BIN)/.installed
	$(BIN)/python benchmarks/bench_run.py
	$(BIN)/python benchmarks/bench_writers.py

clean:
	rm -rf $(VENV) out .pytest_cache
