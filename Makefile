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

# The suite on every core with pytest-xdist (-n auto: one worker per CPU). --dist worksteal gives each
# worker one half of the tests in order (so a module's shared fixtures are mostly made once) and lets
# an idle worker take tests from the other's queue. benchmarks/bench_tests_loaded.py reads this line.
# In one process: .venv/bin/python -m pytest.
test: $(BIN)/.installed
	$(BIN)/python -m pytest -n auto --dist worksteal

lint: $(BIN)/.installed
	$(BIN)/ruff check geo cli tests benchmarks demo_airfield docs examples

bench: $(BIN)/.installed
	$(BIN)/python benchmarks/bench_run.py
	$(BIN)/python benchmarks/bench_writers.py

clean:
	rm -rf $(VENV) out .pytest_cache
