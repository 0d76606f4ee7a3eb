# Set-up commands: `make demo` and `make test` work on a fresh machine with python3 and make.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

.PHONY: demo test test-slow reports bench clean

$(STAMP): pyproject.toml
	test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

demo: $(STAMP)
	-$(BIN)/sweepaudit audit fixtures/demo_edge_long.csv --seed 7

test: $(STAMP)
	$(BIN)/python -m pytest

test-slow: $(STAMP)
	$(BIN)/python -m pytest -m slow

bench: $(STAMP)
	$(BIN)/python benchmarks/snooping_speed.py

clean:
	rm -rf $(VENV) .pytest_cache
