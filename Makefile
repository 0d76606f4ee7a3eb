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

# Example reports from the synthetic demo sweeps. A no-go audit exits 1 and still writes its report;
# any other failure (exit 2: bad input) stops make.
REPORT_RUN = $(BIN)/sweepaudit audit --seed 7 --quiet

reports: $(STAMP)
	$(REPORT_RUN) fixtures/demo_edge_long.csv --report reports/demo_edge.html --report reports/demo_edge.md || [ $$? -eq 1 ]
	$(REPORT_RUN) fixtures/demo_noise_long.csv --report reports/demo_noise.html --report reports/demo_noise.md || [ $$? -eq 1 ]
	$(REPORT_RUN) fixtures/demo_fragile_long.csv --report reports/demo_fragile.html --report reports/demo_fragile.md || [ $$? -eq 1 ]

test: $(STAMP)
	$(BIN)/python -m pytest

test-slow: $(STAMP)
	$(BIN)/python -m pytest -m slow

bench: $(STAMP)
	$(BIN)/python benchmarks/snooping_speed.py
	$(BIN)/python benchmarks/audit_floor.py

clean:
	rm -rf $(VENV) .pytest_cache
